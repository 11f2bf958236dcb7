#!/usr/bin/python3
"""Cross-check of the CSV reader (src/data/csv.c) against Python's csv module.

reference: Python's standard-library `csv` module (csv.reader with the
default "excel" dialect, files opened with newline='' as its documentation
asks), on RFC 4180 edge cases and on seeded random files.

    csv_ref.py PATH/TO/csv_probe [WORKDIR]

The probe prints each record as a JSON line (see tests/ref/csv_probe.c).
For every file, the probe runs with several block sizes (to cross every
block boundary) and must print the same thing each time; its records
(fields, start and end lines) must equal the csv module's, where the csv
module's empty lists for empty lines are dropped (our reader skips empty
lines; csv.h documents it).  For malformed input the csv module in
strict mode must raise where the probe reports a problem, and in
non-strict mode must give the same fields.

Exits 0 when all agree, 1 on a difference, 77 when python's json or csv
module or the probe is missing.
"""
import os
import random
import subprocess
import sys
import tempfile

try:
    import csv
    import json
except ImportError:  # pragma: no cover
    sys.exit(77)

BLOCK_SIZES = [1, 2, 3, 64, 0]  # 0: the reader's default (1 MiB)
RANDOM_BLOCK_SIZES = [1, 7, 0]

failures = 0


def fail(msg):
    global failures
    failures += 1
    print("FAIL:", msg)


def python_records(path, strict=False):
    """reference: Python's csv module.  Returns [(fields, start, end)]."""
    csv.field_size_limit(1 << 30)
    out = []
    with open(path, newline="", encoding="latin-1") as f:
        rd = csv.reader(f, strict=strict)
        while True:
            start = rd.line_num + 1
            try:
                rec = next(rd)
            except StopIteration:
                break
            if rec == []:
                continue  # an empty line; our reader skips it
            out.append((rec, start, rd.line_num))
    return out


def probe_records(probe, path, block):
    args = [probe, path] + ([str(block)] if block else [])
    res = subprocess.run(args, capture_output=True, check=False)
    if res.returncode != 0:
        fail("%s: probe exited %d: %s" % (path, res.returncode, res.stderr.decode("latin-1")))
        return None
    return [json.loads(line) for line in res.stdout.decode("ascii").splitlines()]


def run_probe(probe, path, sizes=BLOCK_SIZES):
    """Runs the probe with every block size; all runs must agree."""
    first = None
    for b in sizes:
        recs = probe_records(probe, path, b)
        if recs is None:
            return None
        if first is None:
            first = recs
        elif recs != first:
            fail("%s: block size %d gives a different result" % (path, b))
    return first


def compare_good(probe, path, name, sizes=BLOCK_SIZES):
    """A well-formed file: the probe's records equal the csv module's."""
    ours = run_probe(probe, path, sizes)
    if ours is None:
        return
    theirs = python_records(path, strict=True)
    if not theirs:
        if ours != [{"kind": "failed", "problem": "no-header", "pline": ours[0].get("pline"),
                     "pcol": 1}]:
            fail("%s: empty input should fail with no-header, got %r" % (name, ours))
        return
    if ours[-1] != {"kind": "end"}:
        fail("%s: probe did not reach the end: %r" % (name, ours[-1]))
        return
    recs = ours[:-1]
    ncols = len(theirs[0][0])
    if len(recs) != len(theirs):
        fail("%s: %d records, csv module has %d" % (name, len(recs), len(theirs)))
        return
    for i, (o, (fields, start, end)) in enumerate(zip(recs, theirs)):
        kept = fields[: ncols + 1]
        want_kind = "header" if i == 0 else ("row" if len(fields) == ncols else "bad")
        got = (o["kind"], o["fields"], o["n_found"], o["line"], o["end_line"])
        want = (want_kind, kept, len(fields), start, end)
        if got != want:
            fail("%s: record %d: probe %r, csv module %r" % (name, i, got, want))
        if want_kind == "bad" and o.get("problem") != "ragged":
            fail("%s: record %d should be ragged, got %r" % (name, i, o.get("problem")))


def write(dirname, name, data):
    path = os.path.join(dirname, name)
    with open(path, "wb") as f:
        f.write(data)
    return path


# RFC 4180 edge cases (reference: RFC 4180 section 2 and Python's csv module).
GOOD_CASES = {
    "crlf": b"a,b\r\n1,2\r\n3,4\r\n",
    "lf": b"a,b\n1,2\n3,4\n",
    "no-final-newline": b"a,b\r\n1,2\r\n3,4",
    "quoted-comma": b'a,b\r\n"x,y",2\r\n',
    "doubled-quote": b'a,b\r\n"say ""hi""",2\r\n',
    "only-quotes": b'a\r\n""""\r\n',
    "quoted-lf": b'a,b\n"line1\nline2",2\n3,4\n',
    "quoted-crlf": b'a,b\r\n"line1\r\nline2\r\nline3",2\r\n3,4\r\n',
    "quoted-cr": b'a,b\r"line1\rline2",2\r3,4\r',
    "lone-cr": b"a,b\r1,2\r3,4",
    "mixed-endings": b"a,b\n1,2\r\n3,4\r5,6\n",
    "empty-fields": b"a,b,c\r\n,,\r\n1,,\r\n,,3\r\n",
    "trailing-comma-eof": b"a,b\r\n1,",
    "blank-lines": b"a,b\r\n\r\n1,2\n\n\n3,4\r\n\r\n",
    "quoted-empty-one-column": b'a\r\n""\r\n1\r\n',
    "spaces-kept": b"a,b\r\n x , y \r\n",
    "header-only": b"name,weight\r\n",
    "header-only-no-newline": b"name,weight",
    "latin1-bytes": b"caf\xe9,b\r\n\xe9t\xe9,2\r\n",
    "utf8-bytes": "loaf,town\r\nbrioche,K\u00f8benhavn\r\n".encode("utf-8"),
    "quoted-header": b'"parcel id","weight, kg"\r\nP1,2.5\r\n',
    "ragged-short": b"a,b,c\r\n1,2\r\n4,5,6\r\n",
    "ragged-long": b"a,b\r\n1,2,3,4\r\n5,6\r\n",
    "empty": b"",
    "only-newlines": b"\r\n\n\r\n",
    "quoted-then-eof": b'a,b\r\n1,"2"',
    "long-field": b"a,b\r\n" + b"x" * 100000 + b",2\r\n",
}


def check_malformed(probe, d):
    # A closing quote followed by text.  reference: Python's csv module,
    # strict mode raises "',' expected after '\"'"; non-strict keeps the text.
    p = write(d, "text-after-quote.csv", b'a,b\r\n"ab"c,2\r\n3,4\r\n')
    ours = run_probe(probe, p)
    try:
        python_records(p, strict=True)
        fail("text-after-quote: csv module (strict) accepted it")
    except csv.Error:
        pass
    loose = python_records(p, strict=False)
    if ours is not None:
        if ours[1].get("problem") != "text-after-quote" or ours[1]["fields"] != loose[1][0]:
            fail("text-after-quote: probe %r, csv module %r" % (ours[1], loose[1]))
        if (ours[1]["pline"], ours[1]["pcol"]) != (2, 5):
            fail("text-after-quote: position %r, want 2:5" % ((ours[1]["pline"], ours[1]["pcol"]),))
        if ours[2]["kind"] != "row" or ours[2]["fields"] != loose[2][0]:
            fail("text-after-quote: reading did not go on: %r" % ours[2])

    # An unterminated quote at the end of input.  reference: Python's csv
    # module, strict mode raises "unexpected end of data".
    p = write(d, "unterminated.csv", b'a,b\r\n1,2\r\n3,"open\r\nstill open\r\n')
    ours = run_probe(probe, p)
    try:
        python_records(p, strict=True)
        fail("unterminated: csv module (strict) accepted it")
    except csv.Error:
        pass
    if ours is not None:
        last = ours[-1]
        if last != {"kind": "failed", "problem": "unterminated", "pline": 3, "pcol": 3}:
            fail("unterminated: probe ends with %r" % last)

    # A quote inside an unquoted field: RFC 4180 section 2 rule 5 forbids it;
    # Python's csv module keeps it as text even in strict mode, so the fields
    # must agree and the probe must report the problem.
    p = write(d, "stray-quote.csv", b'a,b\r\n5 1/2",2\r\n3,4\r\n')
    ours = run_probe(probe, p)
    loose = python_records(p, strict=True)
    if ours is not None:
        if ours[1].get("problem") != "stray-quote" or ours[1]["fields"] != loose[1][0]:
            fail("stray-quote: probe %r, csv module %r" % (ours[1], loose[1]))
        if (ours[1]["pline"], ours[1]["pcol"]) != (2, 6):
            fail("stray-quote: position %r, want 2:6" % ((ours[1]["pline"], ours[1]["pcol"]),))


def random_field(rng):
    kind = rng.random()
    if kind < 0.15:
        s = ""
    elif kind < 0.5:
        s = str(rng.randint(-10000, 10000)) if rng.random() < 0.5 else "%.6g" % rng.uniform(-1e6, 1e6)
    else:
        alphabet = ["a", "b", "z", "0", "7", " ", ",", '"', "\n", "\r", "\r\n", "\xe9", "-", "."]
        s = "".join(rng.choice(alphabet) for _ in range(rng.randint(1, 12)))
    return s


def encode_field(rng, s, ncols):
    need = any(c in s for c in ',"\r\n') or (s == "" and ncols == 1)
    if need or rng.random() < 0.2:
        return '"' + s.replace('"', '""') + '"'
    return s


def random_file(rng):
    ncols = rng.randint(1, 6)
    nrows = rng.randint(0, 25)
    endings = ["\n", "\r\n", "\r"]
    style = rng.random()
    parts = []
    for r in range(nrows + 1):
        n = ncols
        if r > 0 and rng.random() < 0.08:
            n = max(1, ncols + rng.choice([-2, -1, 1, 2]))
        if r == 0:
            fields = ["col%d" % i for i in range(n)]
        else:
            fields = [random_field(rng) for _ in range(n)]
        rec = ",".join(encode_field(rng, f, ncols if n == ncols else 2) for f in fields)
        if rec == "":
            rec = '""'
        if style < 0.3:
            end = "\r\n"
        elif style < 0.6:
            end = "\n"
        else:
            end = rng.choice(endings)
        parts.append(rec)
        last = r == nrows
        if not last or rng.random() < 0.6:
            parts.append(end)
        if not last and rng.random() < 0.05:
            parts.append("\n")  # an empty line
    return "".join(parts).encode("latin-1")


def main():
    if len(sys.argv) < 2 or not os.access(sys.argv[1], os.X_OK):
        print("csv_ref.py: no probe given or not executable; skipped")
        sys.exit(77)
    probe = sys.argv[1]
    with tempfile.TemporaryDirectory() as d:
        for name, data in GOOD_CASES.items():
            compare_good(probe, write(d, name + ".csv", data), name)
        print("edge cases: %d files compared with Python's csv module" % len(GOOD_CASES))
        check_malformed(probe, d)
        print("malformed: text after quote, unterminated quote, stray quote")
        rng = random.Random(20240611)  # seeded: the same files every run
        n_random = 200
        for i in range(n_random):
            data = random_file(rng)
            compare_good(probe, write(d, "random%03d.csv" % i, data),
                         "random%03d (seed 20240611)" % i, RANDOM_BLOCK_SIZES)
        print("random: %d seeded files compared with Python's csv module" % n_random)
    if failures:
        print("%d failure(s)" % failures)
        sys.exit(1)
    print("all agree")


if __name__ == "__main__":
    main()
