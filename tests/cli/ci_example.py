#!/usr/bin/python3
"""ci_example.py KNOWABLE - runs the check step of examples/ci/knowable-pull-request.yml.

The step "Check the schemas" is taken from the workflow file as it stands
(read with PyYAML), its path to knowable replaced by the one under test,
and run with bash in temporary git repositories the way GitHub Actions
runs it (GITHUB_OUTPUT, GITHUB_WORKSPACE; HOME is a temporary folder, so
its `git config --global` touches nothing outside):

- a clean repository with one late column: status=1, a SARIF file written;
- the same after a pull request adds an empty file named
  `--rulebook=off.knowable.yaml` and a rulebook `off.knowable.yaml` that
  turns after-moment and schema-shape off: the status must not be 0 (issue 13, item 10).

Exits 77 (skipped) when PyYAML, bash or git is missing.
"""
import os
import shutil
import subprocess
import sys
import tempfile

try:
    import yaml
except ImportError:
    print("PyYAML missing")
    sys.exit(77)
if not shutil.which("bash") or not shutil.which("git"):
    print("bash or git missing")
    sys.exit(77)

KNOWABLE = os.path.abspath(sys.argv[1])
HERE = os.path.dirname(os.path.abspath(__file__))
WORKFLOW = os.path.join(HERE, "..", "..", "examples", "ci", "knowable-pull-request.yml")

with open(WORKFLOW, encoding="utf-8") as f:
    wf = yaml.safe_load(f)
steps = [s for job in wf["jobs"].values() for s in job["steps"]]
check = next(s for s in steps if s.get("name") == "Check the schemas")
script = check["run"]
if "/tmp/knowable-build/knowable" not in script:
    print("the check step no longer names /tmp/knowable-build/knowable; update this test")
    sys.exit(1)
script = script.replace("/tmp/knowable-build/knowable", KNOWABLE)

SCHEMA = """knowable: 1
dataset: parcel_delays
include: [shared.yaml]
prediction: {moment: dispatch, target: delivered_late}
events:
  order_placed: {}
  dispatch: {after: {order_placed: [PT30M, P3D]}}
  delivered: {after: {dispatch: [PT2H, P10D]}}
columns:
  delivered_late: {role: target, known: delivered}
  hub_scans: {known: order_placed, source: scan_feed}
"""
REGISTER = "knowable: 1\nsources:\n  scan_feed:\n    kind: internal\n    latency: P5D\n"

failures = []


def run_step(repo, home):
    out = os.path.join(home, "github_output")
    open(out, "w").close()
    env = dict(os.environ, HOME=home, GITHUB_OUTPUT=out, GITHUB_WORKSPACE=repo,
               KNOWABLE_FAIL_ON="error", KNOWABLE_SCHEMAS="*.knowable.yaml", KNOWABLE_SKIP="tests/",
               KNOWABLE_TODAY="2026-06-01")
    p = subprocess.run(["bash", "-e", "-c", script], cwd=repo, env=env, capture_output=True, text=True)
    with open(out, encoding="utf-8") as f:
        outputs = dict(line.strip().split("=", 1) for line in f if "=" in line)
    print(p.stdout[-1500:], p.stderr[-800:])
    return p.returncode, outputs


def git(repo, *args):
    subprocess.run(["git", *args], cwd=repo, check=True, capture_output=True)


with tempfile.TemporaryDirectory() as tmp:
    home = os.path.join(tmp, "home")
    repo = os.path.join(tmp, "repo")
    os.makedirs(home)
    os.makedirs(repo)
    git(repo, "init", "-q", ".")
    for name, text in (("late.knowable.yaml", SCHEMA), ("shared.yaml", REGISTER)):
        with open(os.path.join(repo, name), "w", encoding="utf-8") as f:
            f.write(text)
    git(repo, "add", "-A")
    rc, outputs = run_step(repo, home)
    if rc != 0:
        failures.append(f"clean: the step itself failed with {rc}")
    if outputs.get("status") != "1":
        failures.append(f"clean: status={outputs.get('status')}, expected 1 (one after-moment error)")
    if outputs.get("sarif") != "yes" or not os.path.exists(os.path.join(repo, "knowable.sarif")):
        failures.append("clean: no SARIF written")

    with open(os.path.join(repo, "off.knowable.yaml"), "w", encoding="utf-8") as f:
        f.write("knowable_rulebook: 1\nseverity: {after-moment: off, schema-shape: off}\n")
    open(os.path.join(repo, "--rulebook=off.knowable.yaml"), "w").close()
    git(repo, "add", "-A")
    rc, outputs = run_step(repo, home)
    print(f"attack: step exit {rc}, outputs {outputs}")
    if outputs.get("status") in (None, "0"):
        failures.append(f"attack: status={outputs.get('status')}: a file name switched the gate off")

for f in failures:
    print("FAIL:", f)
sys.exit(1 if failures else 0)
