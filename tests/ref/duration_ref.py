#!/usr/bin/python3
"""Cross-check of kn_duration_parse against an outside reference.

reference: Python's datetime.timedelta (standard library).

Several hundred seeded random ISO 8601 durations made only of fixed units
(W, D, H, M after T, S, with a decimal fraction on the last component and an
optional leading '-') are fed to the probe built from
tests/ref/duration_probe.c; for each, the probe's lower and upper bound in
microseconds must both equal the timedelta's total microseconds.

The timedelta is built from the integer parts as keyword arguments; a
fraction 0.F of unit U is added as timedelta(U) * F / 10**len(F), which
timedelta rounds to the nearest microsecond with halves to even (documented
for timedelta / int) - the rounding kn_duration_parse promises.

Months and years have no fixed length and are not covered here; their
calendar bounds ([28 d, 31 d], [365 d, 366 d]) are common practice and are
tested in tests/unit/test_duration.c.

Usage: duration_ref.py PROBE.  Exit status 0 when all agree, 1 on a
mismatch, 77 (skipped) when the interpreter lacks a module this needs.
"""
import sys

try:
    import random
    import subprocess
    from datetime import timedelta
except ImportError as exc:  # pragma: no cover - depends on the interpreter
    print("skipped: missing module: %s" % exc)
    sys.exit(77)

SEED = 8601
COUNT = 600

# Designator, timedelta keyword, whether it follows 'T', largest whole part
# (kept well inside the 10,000-year limit and timedelta's range), and the
# most fraction digits for which timedelta(unit) * F stays in range.
UNITS = [
    ("W", "weeks", False, 5000, 8),
    ("D", "days", False, 40000, 8),
    ("H", "hours", True, 900000, 10),
    ("M", "minutes", True, 50000000, 11),
    ("S", "seconds", True, 3000000000, 12),
]


def number(rng, top):
    """A whole part: small most of the time, sometimes large or padded."""
    pick = rng.random()
    if pick < 0.15:
        return "0"
    if pick < 0.25:
        return "0" * rng.randint(1, 5) + str(rng.randint(1, 99))
    if pick < 0.4:
        return str(rng.randint(0, top))
    return str(rng.randint(1, 99))


def generate(rng):
    """One random duration string and its timedelta."""
    chosen = [u for u in UNITS if rng.random() < 0.45]
    if not chosen:
        chosen = [rng.choice(UNITS)]
    text = "P"
    in_time = False
    total = timedelta(0)
    for i, (letter, keyword, is_time, top, max_digits) in enumerate(chosen):
        if is_time and not in_time:
            text += "T"
            in_time = True
        whole = number(rng, top)
        total += timedelta(**{keyword: int(whole)})
        text += whole
        last = i == len(chosen) - 1
        if last and rng.random() < 0.6:
            digits = "".join(rng.choice("0123456789")
                             for _ in range(rng.randint(1, max_digits)))
            if rng.random() < 0.2:
                # Halves of a microsecond exercise the tie rule.
                digits = digits[:6].ljust(6, "0") + "5"
            mark = "," if rng.random() < 0.3 else "."
            text += mark + digits
            total += timedelta(**{keyword: 1}) * int(digits) / 10 ** len(digits)
        text += letter
    if rng.random() < 0.3:
        text = "-" + text
        total = -total
    return text, total // timedelta(microseconds=1)


def main():
    if len(sys.argv) != 2:
        print("usage: duration_ref.py PROBE", file=sys.stderr)
        return 2
    rng = random.Random(SEED)
    cases = [generate(rng) for _ in range(COUNT)]
    stdin = "".join(text + "\n" for text, _ in cases)
    run = subprocess.run([sys.argv[1]], input=stdin, capture_output=True,
                         text=True, check=False)
    if run.returncode != 0:
        print("probe failed with status %d: %s" % (run.returncode, run.stderr))
        return 1
    lines = run.stdout.splitlines()
    if len(lines) != len(cases):
        print("probe printed %d lines for %d inputs" % (len(lines), len(cases)))
        return 1
    bad = 0
    for (text, want), got in zip(cases, lines):
        # reference: Python's datetime.timedelta
        expected = "%d %d" % (want, want)
        if got != expected:
            bad += 1
            if bad <= 20:
                print("MISMATCH %s: probe %r, timedelta %r" % (text, got, expected))
    print("%d durations compared with datetime.timedelta, %d mismatches"
          % (len(cases), bad))
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
