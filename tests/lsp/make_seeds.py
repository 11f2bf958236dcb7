#!/usr/bin/python3
"""make_seeds.py - writes the seeds of the lsp fuzz harness
(tests/fuzz/seeds/lsp/): each recorded sequence of sequences/ as the byte
stream the server reads, its documents placed under /tmp (a folder that
exists everywhere; the registers do not, so their includes are refused).
Run it after changing a sequence, and commit the result."""
import glob
import importlib.util
import os

HERE = os.path.dirname(os.path.abspath(__file__))
spec = importlib.util.spec_from_file_location("replay", os.path.join(HERE, "replay.py"))
replay = importlib.util.module_from_spec(spec)
spec.loader.exec_module(replay)

for seq in sorted(glob.glob(os.path.join(HERE, "sequences", "*.seq"))):
    out = b""
    with open(seq, encoding="utf-8") as f:
        for line in f:
            cmd, _, arg = line.rstrip("\n").partition(" ")
            if cmd == "send":
                for folder in ("${URI}/bakery-strict/", "${URI}/bakery/", "${URI}/", "${SCRATCH_URI}/"):
                    arg = arg.replace(folder, "file:///tmp/")
                # Other spellings of this folder's URI (file://localhost/...,
                # FILE:...) likewise: no seed holds the path of a checkout.
                out += replay.frame(replay.substitute(arg).replace(replay.ROOT + "/bakery/", "/tmp/")
                                    .replace(replay.ROOT + "/", "/tmp/"))
            elif cmd == "raw":
                out += replay.unescape(arg)
    name = os.path.basename(seq)[:-len(".seq")]
    with open(os.path.join(HERE, "..", "fuzz", "seeds", "lsp", name), "wb") as f:
        f.write(out)
