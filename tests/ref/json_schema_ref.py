#!/usr/bin/python3
"""json_schema_ref.py KNOWABLE - `knowable json-schema` agrees with the loader.

Run from tests/ (meson's workdir).  The JSON Schema that `knowable
json-schema` prints is checked against the draft-07 meta-schema, then every
example and golden schema is read twice:

- by knowable itself (`check --format json`): the file is "valid in shape"
  when no diagnostic in it is `schema-shape`, nor a `bad-duration` that a
  JSON Schema can see (a malformed duration or a lag that is not a pair;
  not MIN above MAX, a negative refresh or a duration too large to hold,
  which need arithmetic), nor a `schema-shape` that compares two values
  (the target column given a second role);
- by PyYAML and python-jsonschema against the generated JSON Schema
  (reference: JSON Schema draft-07, json-schema.org; python-jsonschema's
  Draft7Validator).  YAML timestamps are read as strings, as editors reading
  YAML 1.2 do.

The two verdicts must agree for every file, and both kinds must occur.
Registers pulled in with `include` are checked against
definitions/included_file the same way.  Files that are not YAML (the
yaml-syntax cases), hold duplicate keys (a YAML reader keeps only one, so a
JSON Schema never sees the second) or several documents are left out.

A second set of files is made here by mutating the demo schema, each
mutation a shape mistake a person could type (or a harmless change), so the
agreement is also tested where the golden cases are thin.

Exits 77 (skipped) when jsonschema or yaml is missing.
"""
import glob
import json
import os
import shutil
import subprocess
import sys
import tempfile

try:
    import jsonschema
    import yaml
except ImportError:
    print("jsonschema or yaml is missing; skipped")
    sys.exit(77)

KNOWABLE = os.path.abspath(sys.argv[1])
failures = []


class Loader(yaml.SafeLoader):
    """SafeLoader without the timestamp type (dates stay strings)."""


Loader.yaml_implicit_resolvers = {
    k: [(tag, rx) for tag, rx in v if tag != "tag:yaml.org,2002:timestamp"]
    for k, v in yaml.SafeLoader.yaml_implicit_resolvers.items()
}


def to_json(v):
    """YAML data as JSON data: mapping keys become strings (null: "")."""
    if isinstance(v, dict):
        return {("" if k is None else str(k).lower() if isinstance(k, bool) else str(k)): to_json(x)
                for k, x in v.items()}
    if isinstance(v, list):
        return [to_json(x) for x in v]
    return v


p = subprocess.run([KNOWABLE, "json-schema"], capture_output=True)
if p.returncode != 0:
    print("knowable json-schema failed:", p.stderr.decode())
    sys.exit(1)
SCHEMA = json.loads(p.stdout)
jsonschema.Draft7Validator.check_schema(SCHEMA)
ROOT = jsonschema.Draft7Validator(SCHEMA)
INCLUDED = jsonschema.Draft7Validator({**SCHEMA["definitions"]["included_file"],
                                       "definitions": SCHEMA["definitions"]})

JSON_SCHEMA_BLIND = ("above its maximum", "is negative", "too large")
# schema-shape findings that compare two values of the file (the target
# column given a second role elsewhere), which a JSON Schema cannot express.
# A reference to a first_of event (events.X.after, a first_of member, the
# moment) depends on what the name refers to, also beyond a JSON Schema.
SHAPE_CROSS_REFERENCE = ("(prediction.target) and cannot also have role", "names the target '",
                         ", a first_of event:", "names the event itself")


def shape_problems(diags, display):
    out = []
    for d in diags:
        if d["file"] != display or d["severity"] == "note":
            continue  # note-level hints (months beside minutes) are not shape errors
        if d["rule"] == "schema-shape" and not any(s in d["message"] for s in SHAPE_CROSS_REFERENCE):
            out.append(d["message"])
        elif d["rule"] == "bad-duration" and not any(s in d["message"] for s in JSON_SCHEMA_BLIND):
            out.append(d["message"])
    return out


def read_yaml(path):
    with open(path, encoding="utf-8") as f:
        docs = list(yaml.load_all(f, Loader=Loader))
    if len(docs) != 1:
        raise ValueError("not one document")
    return to_json(docs[0])


counts = {"valid": 0, "invalid": 0, "left out": 0}


def compare(path, display, diags, validator):
    try:
        data = read_yaml(path)
    except (yaml.YAMLError, ValueError, UnicodeDecodeError):
        counts["left out"] += 1
        return
    problems = shape_problems(diags, display)
    errors = [e.message for e in validator.iter_errors(data)]
    loader_ok, schema_ok = not problems, not errors
    counts["valid" if loader_ok else "invalid"] += 1
    if loader_ok != schema_ok:
        if loader_ok:
            failures.append(f"{path}: valid in shape, but the JSON Schema says: {errors[:3]}")
        else:
            failures.append(f"{path}: not valid in shape ({problems[:3]}), but the JSON Schema accepts it")


def check_schema_file(path):
    folder, name = os.path.split(os.path.abspath(path))
    p = subprocess.run([KNOWABLE, "check", "--format", "json", name], cwd=folder, capture_output=True,
                       env={**os.environ, "KNOWABLE_TODAY": "2026-06-01"})
    try:
        report = json.loads(p.stdout)
    except ValueError:
        failures.append(f"{path}: no JSON report (exit {p.returncode})")
        return
    diags = report["diagnostics"]
    if any(d["rule"] in ("yaml-syntax", "duplicate-key") for d in diags):
        counts["left out"] += 1
        return
    compare(os.path.join(folder, name), name, diags, ROOT)
    try:
        data = read_yaml(os.path.join(folder, name))
    except (yaml.YAMLError, ValueError, UnicodeDecodeError):
        return
    includes = data.get("include") if isinstance(data, dict) else None
    if isinstance(includes, list):
        for inc in includes:
            target = os.path.join(folder, inc) if isinstance(inc, str) else ""
            # An include that loops back to the schema itself is refused, not read as a register.
            if (isinstance(inc, str) and not inc.startswith("/") and os.path.isfile(target)
                    and not os.path.samefile(target, os.path.join(folder, name))):
                compare(os.path.join(folder, inc), inc, diags, INCLUDED)


# Mutations of the demo: (what it does, old text, new text).  Each replaces
# one occurrence; the loader decides whether the result is valid in shape.
MUTATIONS = [
    ("unknown top-level key", "dataset: parcel_delay_training", "dataset: parcel_delay_training\ndatset: x"),
    ("x_ key at top level", "dataset: parcel_delay_training", "dataset: parcel_delay_training\nx_owner: ops"),
    ("x_ key in a column", "    role: identifier\n", "    role: identifier\n    x_note: kept\n"),
    ("misspelt column key", "    type: number\n    known: order_placed", "    typ: number\n    known: order_placed"),
    ("role not in the list", "    role: identifier\n", "    role: identifer\n"),
    ("type as a list", "    type: number\n", "    type: [number]\n"),
    ("version 2", "knowable: 1", "knowable: 2"),
    ("version as text", "knowable: 1", "knowable: 'one'"),
    ("no dataset", "dataset: parcel_delay_training\n", ""),
    ("no prediction moment", "  moment: dispatch\n", ""),
    ("prediction as a list", "prediction:\n  moment: dispatch", "prediction:\n - moment: dispatch"),
    ("window without to", "{anchor: dispatch, from: PT0S, to: PT6H}", "{anchor: dispatch, from: PT0S}"),
    ("window bad duration", "to: PT6H}", "to: PT6Q}"),
    ("window lowercase duration", "to: PT6H}", "to: pt6h}"),
    ("window fraction", "to: PT6H}", "to: PT5.5H}"),
    ("window fraction not last", "to: PT6H}", "to: PT5.5H30M}"),
    ("window T with nothing", "to: PT6H}", "to: P1DT}"),
    ("window negative", "from: PT0S", "from: -P1W"),
    ("derived_from as a word", "derived_from: [weight_kg, promised_days]", "derived_from: weight_kg"),
    ("derived_from with an empty name", "derived_from: [weight_kg, promised_days]", "derived_from: [weight_kg, '']"),
    ("join key as a list", "join: {key: sender_id}", "join: {key: [sender_id, parcel_id]}"),
    ("join key as a mapping", "join: {key: sender_id}", "join: {key: {a: b}}"),
    ("join with unknown key", "join: {key: sender_id}", "join: {key: sender_id, when: now}"),
    ("quasi_identifier yes", "quasi_identifier: true", "quasi_identifier: yes"),
    ("quasi_identifier quoted", "quasi_identifier: true", "quasi_identifier: 'true'"),
    ("quasi_identifier number", "quasi_identifier: true", "quasi_identifier: 1"),
    ("column set to null", "  weight_per_day:\n    type: number\n    derived_from: [weight_kg, promised_days]",
     "  weight_per_day:"),
    ("column set to a word", "  weight_per_day:\n    type: number\n    derived_from: [weight_kg, promised_days]",
     "  weight_per_day: number"),
    ("include as a word", "include: [shared/carrier-register.yaml]", "include: shared/carrier-register.yaml"),
    ("waiver without rule", "    quasi_identifier: true\n",
     "    quasi_identifier: true\n    waive: [{reason: accepted}]\n"),
    ("waiver with a bad date", "    quasi_identifier: true\n",
     "    quasi_identifier: true\n    waive: [{rule: join-latest-value, reason: ok, expires: 2026-02-30}]\n"),
    ("waiver with a leap day", "    quasi_identifier: true\n",
     "    quasi_identifier: true\n    waive: [{rule: join-latest-value, reason: ok, expires: 2028-02-29}]\n"),
    ("waiver with no leap day", "    quasi_identifier: true\n",
     "    quasi_identifier: true\n    waive: [{rule: join-latest-value, reason: ok, expires: 2100-02-29}]\n"),
    ("waiver as a mapping", "    quasi_identifier: true\n",
     "    quasi_identifier: true\n    waive: {rule: join-latest-value}\n"),
    ("pipeline step unknown", "  - step: scale", "  - step: normalise"),
    ("pipeline step missing", "  - step: scale\n    fit: all_rows", "  - fit: all_rows"),
    ("split folds as text", "  method: random", "  method: random\n  folds: five"),
    ("split folds", "  method: random", "  method: random\n  folds: 5"),
    ("split gap", "  method: random", "  method: random\n  gap: P7D"),
    ("split gap number", "  method: random", "  method: random\n  gap: 7"),
    ("description number", "dataset: parcel_delay_training", "dataset: parcel_delay_training\ndescription: 42"),
]


def mutated_cases(tmp):
    demo_dir = os.path.join("..", "examples")
    src = os.path.join(demo_dir, "parcel-delays.knowable.yaml")
    with open(src, encoding="utf-8") as f:
        text = f.read()
    shutil.copytree(os.path.join(demo_dir, "shared"), os.path.join(tmp, "shared"))
    for i, (what, old, new) in enumerate(MUTATIONS):
        if old not in text:
            failures.append(f"mutation '{what}' no longer applies to the demo")
            continue
        path = os.path.join(tmp, f"m{i:02d}.knowable.yaml")
        with open(path, "w", encoding="utf-8") as f:
            f.write(text.replace(old, new, 1))
        yield path


files = sorted(glob.glob("cases/**/*.knowable.yaml", recursive=True) +
               glob.glob("../examples/**/*.knowable.yaml", recursive=True))
for path in files:
    check_schema_file(path)
with tempfile.TemporaryDirectory() as tmp:
    for path in mutated_cases(tmp):
        check_schema_file(path)

for f in failures:
    print(f)
print(f"{counts['valid']} files valid in shape, {counts['invalid']} not, {counts['left out']} left out; "
      f"{len(failures)} disagreements")
if counts["valid"] == 0 or counts["invalid"] == 0:
    print("both kinds of file must occur")
    sys.exit(1)
sys.exit(1 if failures else 0)
