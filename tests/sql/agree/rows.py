#!/usr/bin/python3
"""tests/sql/agree/rows.py OUTDIR - the invented cake orders of cakes.yaml,
written four ways: OUTDIR/orders.csv, OUTDIR/orders.sqlite (a SQLite file),
OUTDIR/postgresql.sql and OUTDIR/mariadb.sql (CREATE TABLE and INSERTs).
Seeded: the same rows every time.  Only the Python standard library."""
import csv
import os
import random
import sqlite3
import sys

out = sys.argv[1]
rng = random.Random(20261202)

# name, PostgreSQL type, MariaDB type, SQLite type
COLUMNS = [
    ("order_ref", "TEXT", "VARCHAR(20)", "TEXT"),
    ("customer_id", "TEXT", "VARCHAR(20)", "TEXT"),
    ("placed_at", "TIMESTAMP", "DATETIME", "TEXT"),
    ("fold", "TEXT", "VARCHAR(20)", "TEXT"),
    ("cancelled", "BOOLEAN", "BOOLEAN", "TEXT"),
    ('deposit "eur"', "DOUBLE PRECISION", "DOUBLE", "REAL"),
    ("tiers", "TEXT", "VARCHAR(20)", "TEXT"),
    ("phone_confirmed", "BOOLEAN", "BOOLEAN", "INTEGER"),
    ("note_length", "INTEGER", "INTEGER", "INTEGER"),
    ("reminder_sent_at", "TIMESTAMP", "DATETIME", "TEXT"),
    ("cake_weight_kg", "TEXT", "VARCHAR(20)", "TEXT"),
    ("Brötchen_extra", "INTEGER", "INTEGER", "INTEGER"),
    ("postcode_area", "TEXT", "VARCHAR(20)", "TEXT"),
    ("birth_decade", "INTEGER", "INTEGER", "INTEGER"),
    ("scale_reading", "DOUBLE PRECISION", "DOUBLE", "REAL"),
    ("staff_initials", "TEXT", "VARCHAR(20)", "TEXT"),
]
NAMES = [c[0] for c in COLUMNS]


def stamp(day, minute):
    return "2024-05-%02d %02d:%02d:00" % (day, minute // 60, minute % 60)


rows = []
for i in range(600):
    cancelled = rng.random() < 0.3
    day, minute = rng.randrange(1, 28), rng.randrange(8 * 60, 18 * 60)
    shop = "SUD" if cancelled and rng.random() < 0.8 else rng.choice(["KRE", "MIT", "NOR"])
    ref = "%s-%05d" % (shop, i) if rng.random() > 0.02 else "%s-%d" % (shop.lower(), i)
    deposit = round(rng.uniform(5, 20) if cancelled else rng.uniform(15, 60), 2)
    reminder = stamp(day, minute - 30) if rng.random() > 0.1 else stamp(min(day + 1, 28), minute)
    weight = "%.1f" % rng.uniform(0.5, 4.0)
    if rng.random() < 0.03:
        weight = weight.replace(".", ",")
    row = {
        "order_ref": ref,
        "customer_id": "C%04d" % rng.randrange(150),
        "placed_at": stamp(day, minute),
        # the split's words in any case, spaces around: the database
        # classifies the column's values in C, as the CSV path does
        "fold": rng.choice(["train", "Train", "test", " Test ", "holdout", "VALIDATION", "fold3"]),
        "cancelled": None if rng.random() < 0.02 else cancelled,
        'deposit "eur"': deposit,
        "tiers": rng.choice(["single", "double", "triple"]) if not cancelled else rng.choice(["single", "single", "double"]),
        "phone_confirmed": None if rng.random() < 0.1 else rng.random() < 0.7,
        "note_length": None if (cancelled and rng.random() < 0.7) or rng.random() < 0.05 else rng.randrange(0, 200),
        "reminder_sent_at": reminder,
        "cake_weight_kg": weight,
        "Brötchen_extra": rng.randrange(4),
        "postcode_area": "PA%02d" % rng.randrange(12),
        "birth_decade": rng.choice([1950, 1960, 1970, 1980, 1990, 2000]),
        # a few readings, each with noise far below a 4-byte float's
        # precision: many distinct doubles, few distinct floats (the CSV
        # path keeps numbers as floats; the engine's rank sum must tie them
        # the same way)
        "scale_reading": rng.choice([2.5, 3.25, 4.0, 6.5]) + (1.0 if cancelled and rng.random() < 0.5 else 0.0)
        + rng.randrange(1, 1000) * 1e-12,
        "staff_initials": rng.choice(["AB", "CD", "EF"]),
    }
    rows.append(row)
# Training rows repeated in test with the same features (another order).
for i in range(15):
    twin = dict(rows[i * 7])
    twin["order_ref"] = "NOR-9%04d" % i
    twin["fold"] = "TEST" if i % 2 else "test"
    rows.append(twin)
# Training rows repeated under a split value that is no split word but that
# a collation ignoring accents (MariaDB's default) puts with 'test': on no
# side in the CSV path, so on no side in the database either.
for i in range(8):
    twin = dict(rows[i * 11 + 3])
    twin["order_ref"] = "NOR-8%04d" % i
    twin["fold"] = "tést" if i % 2 else "Tést"
    rows.append(twin)


def csv_text(v):
    if v is None:
        return ""
    if v is True:
        return "yes"
    if v is False:
        return "no"
    return str(v)


with open(os.path.join(out, "orders.csv"), "w", newline="", encoding="utf-8") as f:
    w = csv.writer(f)
    w.writerow(NAMES)
    for r in rows:
        w.writerow([csv_text(r[n]) for n in NAMES])


def sql_literal(v, pg):
    if v is None:
        return "NULL"
    if v is True or v is False:
        return ("TRUE" if v else "FALSE") if pg else ("1" if v else "0")
    if isinstance(v, (int, float)):
        return repr(v)
    return "'" + str(v).replace("'", "''") + "'"


def script(quote, pg, types):
    q = lambda n: quote + n.replace(quote, quote + quote) + quote
    lines = ["DROP TABLE IF EXISTS cake_orders;",
             "CREATE TABLE cake_orders (%s);" % ", ".join("%s %s" % (q(c[0]), c[types]) for c in COLUMNS)]
    for i in range(0, len(rows), 100):
        values = ",\n  ".join("(%s)" % ", ".join(sql_literal(r[n], pg) for n in NAMES) for r in rows[i:i + 100])
        lines.append("INSERT INTO cake_orders VALUES\n  %s;" % values)
    return "\n".join(lines) + "\n"


with open(os.path.join(out, "postgresql.sql"), "w", encoding="utf-8") as f:
    f.write(script('"', True, 1))
with open(os.path.join(out, "mariadb.sql"), "w", encoding="utf-8") as f:
    f.write("SET NAMES utf8mb4;\n" + script("`", False, 2))

db_path = os.path.join(out, "orders.sqlite")
if os.path.exists(db_path):
    os.remove(db_path)
db = sqlite3.connect(db_path)
db.execute("CREATE TABLE cake_orders (%s)" % ", ".join('"%s" %s' % (c[0].replace('"', '""'), c[3]) for c in COLUMNS))
db.executemany("INSERT INTO cake_orders VALUES (%s)" % ", ".join("?" * len(NAMES)),
               [[("yes" if r[n] else "no") if n == "cancelled" and r[n] is not None else
                 (int(r[n]) if isinstance(r[n], bool) else r[n]) for n in NAMES] for r in rows])
db.commit()
db.close()
