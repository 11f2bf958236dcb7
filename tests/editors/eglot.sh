#!/bin/sh
# Emacs with eglot (Debian's emacs-nox and elpa-eglot, or Emacs 29 where
# eglot is built in), in batch mode, loads editors/emacs/knowable.el and
# drives `knowable lsp` through eglot_test.el.  Exits 77 (skipped) when
# emacs or eglot is not installed.
knowable=$(cd "$(dirname "$1")" && pwd)/$(basename "$1")
command -v emacs >/dev/null 2>&1 || { echo "emacs is not installed: skipped"; exit 77; }
here=$(cd "$(dirname "$0")" && pwd)
src=$(cd "$here/../.." && pwd)
tmp=$(mktemp -d) || exit 1
trap 'rm -rf "$tmp"' EXIT
# Emacs keeps its state under the home folder: keep it out of the real one.
export HOME="$tmp"
emacs --batch --eval "(require 'eglot)" >"$tmp/probe" 2>&1 ||
    { echo "eglot is not installed: skipped"; tail -n 3 "$tmp/probe"; exit 77; }
export KNOWABLE="$knowable" LSP_ROOT="$src/tests/lsp"
timeout 90 emacs --batch -l "$src/editors/emacs/knowable.el" -l "$here/eglot_test.el" </dev/null
