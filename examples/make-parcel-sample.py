#!/usr/bin/env python3
"""Writes the invented data samples of the parcel-delay demo
(parcel-delays.knowable.yaml), seeded so that every run writes the same bytes:

  parcel-delays-sample.csv        2,000 parcels with planted problems
  parcel-delays-sample-clean.csv  the same parcels without them

Planted in the first file (and what `knowable check --data` should say):
  - total_scans is counted after delivery; late parcels collect many more
    scans, so it separates arrived_late alone (lone-feature-separates);
  - hub_dwell_minutes is left empty for most late parcels, whose hub record
    is rewritten when they are re-routed (missingness-predicts);
  - late parcels get a new parcel_id at the re-delivery depot 'RDL', so the
    depot segment of the identifier encodes the outcome
    (identifier-segment-predicts);
  - 40 test rows are copies of training rows (rows-shared-across-split);
  - the split is random, so senders have parcels on both sides
    (entity-in-both-splits);
  - eight parcels go to postcodes seen only once or twice
    (small-quasi-identifier-groups);
  - three weights are written with a decimal comma, '2,5' (value-mismatch).
In the clean twin none of this holds: the split is by sender, every postcode
has at least five parcels and no feature is settled after dispatch.

Usage: make-parcel-sample.py [OUTPUT_FOLDER]   (default: this file's folder)
"""
import csv
import datetime
import os
import random
import sys

N = 2000
HEADER = ["parcel_id", "sender_id", "dispatched_at", "split", "arrived_late", "weight_kg",
          "service_level", "promised_days", "rain_mm_next_6h", "hub_dwell_minutes",
          "recipient_postcode", "postcode_theft_risk", "total_scans", "late_share_for_sender",
          "weight_per_day"]
DEPOTS = ["LHR", "MAN", "BHX", "GLA"]
SERVICES = {"EXP": 1, "STD": 3, "ECO": 5}
POSTCODES = ["%s%d" % (area, d) for area in ["LS", "M", "B", "G", "EH", "CF", "BS", "NE"]
             for d in range(1, 6)]


def parcels(rng):
    """The parcels both files share: the outcome and the honest features."""
    start = datetime.datetime(2025, 1, 6, 6, 0)
    senders = ["S%05d" % rng.randrange(10000, 99999) for _ in range(250)]
    risk = {pc: round(rng.uniform(0.1, 0.9), 2) for pc in POSTCODES}
    rows = []
    for i in range(N):
        service = rng.choice(list(SERVICES))
        weight = round(rng.lognormvariate(1.0, 0.6), 2)
        rain = round(max(0.0, rng.gauss(2.0, 2.5)), 1)
        postcode = POSTCODES[i % len(POSTCODES)]
        # Lateness depends mildly on rain, weight and service: no single
        # honest feature comes near separating it.
        p = 0.12 + 0.03 * rain + 0.02 * weight + (0.08 if service == "ECO" else 0.0)
        late = rng.random() < min(p, 0.9)
        dispatched = start + datetime.timedelta(minutes=rng.randrange(0, 540 * 24 * 60))
        rows.append({
            "seq": i,
            "depot": rng.choice(DEPOTS),
            "service_level": service,
            "sender_id": rng.choice(senders),
            "dispatched_at": dispatched.strftime("%Y-%m-%dT%H:%M:%SZ"),
            "arrived_late": "true" if late else "false",
            "weight_kg": weight,
            "promised_days": SERVICES[service],
            "rain_mm_next_6h": rain,
            "hub_dwell_minutes": rng.randrange(20, 240),
            "recipient_postcode": postcode,
            "postcode_theft_risk": risk[postcode],
            "scans_before_dispatch": rng.randrange(2, 5),
            "late": late,
        })
    return rows, senders


def finish(r, rng, leaky, split):
    depot = r["depot"]
    if leaky and r["late"] and rng.random() < 0.9:
        depot = "RDL"
    hub = r["hub_dwell_minutes"]
    if leaky and r["late"] and rng.random() < 0.93:
        hub = ""
    if leaky:
        scans = rng.randrange(9, 16) if r["late"] else rng.randrange(3, 9)
        if rng.random() < 0.02:
            scans = rng.randrange(3, 16)
    else:
        scans = r["scans_before_dispatch"]
    share = round(min(1.0, max(0.0, rng.gauss(0.25, 0.1))), 3)
    return {
        "parcel_id": "%s-%s-%08d" % (depot, r["service_level"], 10000000 + r["seq"] * 37),
        "sender_id": r["sender_id"],
        "dispatched_at": r["dispatched_at"],
        "split": split,
        "arrived_late": r["arrived_late"],
        "weight_kg": r["weight_kg"],
        "service_level": r["service_level"],
        "promised_days": r["promised_days"],
        "rain_mm_next_6h": r["rain_mm_next_6h"],
        "hub_dwell_minutes": hub,
        "recipient_postcode": r["recipient_postcode"],
        "postcode_theft_risk": r["postcode_theft_risk"],
        "total_scans": scans,
        "late_share_for_sender": share,
        "weight_per_day": round(r["weight_kg"] / r["promised_days"], 3),
    }


def write(path, rows):
    with open(path, "w", newline="") as f:
        w = csv.DictWriter(f, fieldnames=HEADER, lineterminator="\n")
        w.writeheader()
        w.writerows(rows)


def main():
    out = sys.argv[1] if len(sys.argv) > 1 else os.path.dirname(os.path.abspath(__file__))
    base, senders = parcels(random.Random(20261201))

    rng = random.Random(7)
    leaky = [finish(r, rng, True, "test" if rng.random() < 0.2 else "train") for r in base]
    train = [r for r in leaky if r["split"] == "train"]
    for i in range(40):
        copy = dict(rng.choice(train))
        copy["parcel_id"] = "%s-%08d" % (copy["parcel_id"][:7], 90000000 + i)
        copy["split"] = "test"
        leaky.insert(rng.randrange(len(leaky)), copy)
    for i in range(8):
        leaky[rng.randrange(len(leaky))]["recipient_postcode"] = ["ZE1", "ZE2", "HS9", "KW17"][i // 2]
    for i in range(3):
        leaky[rng.randrange(len(leaky))]["weight_kg"] = "2,5"
    write(os.path.join(out, "parcel-delays-sample.csv"), leaky)

    rng = random.Random(7)
    test_senders = set(random.Random(11).sample(senders, 50))
    clean = [finish(r, rng, False, "test" if r["sender_id"] in test_senders else "train") for r in base]
    write(os.path.join(out, "parcel-delays-sample-clean.csv"), clean)


if __name__ == "__main__":
    main()
