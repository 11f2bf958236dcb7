#!/usr/bin/python3
"""Cross-check of typed field reading (src/data/values.c).

    values_ref.py PATH/TO/values_probe

- timestamps and dates: reference: Python's datetime module (datetime,
  timezone, timedelta) decides which calendar dates, times of day and UTC
  offsets exist and gives microseconds since 1970-01-01T00:00:00Z, on seeded
  random values (valid and invalid);
- numbers: reference: Python's float() (correctly rounded) gives the value
  of every text that matches the grammar documented in values.h; the
  grammar itself is ours (a regular expression below).

Exits 0 when all agree, 1 on a difference, 77 when the probe is missing.
"""
import os
import random
import re
import subprocess
import sys
from datetime import date, datetime, timedelta, timezone

EPOCH = datetime(1970, 1, 1, tzinfo=timezone.utc)
NUMBER = re.compile(r"[+-]?([0-9]+(\.[0-9]*)?|\.[0-9]+)([eE][+-]?[0-9]+)?\Z")


def random_timestamp(rng):
    y = rng.randint(1, 9999)
    m = rng.randint(1, 12) if rng.random() < 0.95 else rng.choice([0, 13])
    d = rng.randint(1, 31) if rng.random() < 0.97 else 0
    if rng.random() < 0.1:
        y = rng.choice([1900, 2000, 2023, 2024, 2100])
        m = 2
        d = rng.choice([28, 29, 30])
    hh = rng.randint(0, 23) if rng.random() < 0.97 else 24
    mi = rng.randint(0, 59) if rng.random() < 0.97 else 60
    ss = rng.randint(0, 59) if rng.random() < 0.97 else 60
    text = "%04d-%02d-%02d" % (y, m, d)
    form = rng.random()
    if form < 0.1:
        return text, (y, m, d, 0, 0, 0, 0, None)
    text += rng.choice(["T", " ", "t"]) + "%02d:%02d" % (hh, mi)
    us = 0
    if rng.random() < 0.7:
        text += ":%02d" % ss
        if rng.random() < 0.5:
            n = rng.randint(1, 9)
            frac = "".join(rng.choice("0123456789") for _ in range(n))
            text += rng.choice(".,") + frac
            us = int((frac + "000000")[:6])
    else:
        ss = 0
    off = None
    r = rng.random()
    if r < 0.3:
        pass
    elif r < 0.45:
        text += rng.choice("Zz")
        off = 0
    else:
        oh = rng.randint(0, 23) if rng.random() < 0.95 else 24
        om = rng.randint(0, 59)
        sign = rng.choice("+-")
        style = rng.random()
        if style < 0.6:
            text += "%s%02d:%02d" % (sign, oh, om)
        elif style < 0.85:
            text += "%s%02d%02d" % (sign, oh, om)
        else:
            text += "%s%02d" % (sign, oh)
            om = 0
        off = (oh * 60 + om) * (-1 if sign == "-" else 1)
        if oh > 23:
            off = "bad"
    return text, (y, m, d, hh, mi, ss, us, off)


def expected_timestamp(parts):
    """reference: Python's datetime module."""
    y, m, d, hh, mi, ss, us, off = parts
    try:
        if off == "bad":
            return None
        tz = timezone.utc if off is None else timezone(timedelta(minutes=off))
        dt = datetime(y, m, d, hh, mi, ss, us, tzinfo=tz)
    except ValueError:
        return None
    return (dt - EPOCH) // timedelta(microseconds=1)


def random_number(rng):
    r = rng.random()
    if r < 0.4:
        return repr(rng.uniform(-1e6, 1e6))
    if r < 0.6:
        return "%.*e" % (rng.randint(0, 20), rng.lognormvariate(0, 80) * rng.choice([-1, 1]))
    if r < 0.8:
        return str(rng.randint(-10 ** 20, 10 ** 20))
    alphabet = "0123456789+-.eE_x ,"
    return "".join(rng.choice(alphabet) for _ in range(rng.randint(1, 10)))


def expected_number(text):
    """reference: Python's float() for the value; values.h for the grammar."""
    t = text.strip(" \t")
    if t.lower() in ("", "na", "nan", "null"):
        return "missing"
    if not NUMBER.match(t) or len(t) > 300:
        return "invalid"
    v = float(t)
    if v in (float("inf"), float("-inf")):
        return "invalid"
    return v


def main():
    if len(sys.argv) < 2 or not os.access(sys.argv[1], os.X_OK):
        print("values_ref.py: no probe given or not executable; skipped")
        sys.exit(77)
    rng = random.Random(7301)  # seeded: the same values every run
    lines, want = [], []
    for _ in range(20000):
        text, parts = random_timestamp(rng)
        lines.append("t " + text)
        want.append(("t", text, expected_timestamp(parts)))
    for _ in range(5000):
        y, m, d = rng.randint(1, 9999), rng.randint(0, 13), rng.randint(0, 32)
        text = "%04d-%02d-%02d" % (y, m, d)
        try:
            v = (datetime(y, m, d, tzinfo=timezone.utc) - EPOCH) // timedelta(microseconds=1)
            date(y, m, d)
        except ValueError:
            v = None
        lines.append("d " + text)
        want.append(("d", text, v))
    for _ in range(20000):
        text = random_number(rng)
        lines.append("n " + text)
        want.append(("n", text, expected_number(text)))
    res = subprocess.run([sys.argv[1]], input="\n".join(lines) + "\n", capture_output=True,
                         text=True, check=False)
    if res.returncode != 0:
        print("FAIL: probe exited %d: %s" % (res.returncode, res.stderr))
        sys.exit(1)
    got = res.stdout.splitlines()
    failures = 0
    counts = {"t": [0, 0], "d": [0, 0], "n": [0, 0]}
    for (kind, text, w), g in zip(want, got):
        if kind in "td":
            ok = (g == "invalid") if w is None else (g == "ok %d" % w)
        elif w in ("missing", "invalid"):
            ok = g == w
        else:
            ok = g.startswith("ok ") and float(g[3:]) == w
        counts[kind][0 if (w is None or w == "invalid") else 1] += 1
        if not ok:
            failures += 1
            if failures <= 20:
                print("FAIL: %s %r: probe %r, reference %r" % (kind, text, g, w))
    if len(got) != len(want):
        print("FAIL: %d answers for %d lines" % (len(got), len(want)))
        failures += 1
    for kind, name in (("t", "timestamps"), ("d", "dates"), ("n", "numbers")):
        print("%s: %d valid, %d invalid compared" % (name, counts[kind][1], counts[kind][0]))
    if failures:
        print("%d failure(s)" % failures)
        sys.exit(1)
    print("all agree")


if __name__ == "__main__":
    main()
