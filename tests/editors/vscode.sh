#!/bin/sh
# The VS Code extension (editors/vscode) as far as it can be tested without
# VS Code: vscode_test.js in node.  Exits 77 (skipped) when node is not
# installed.
knowable=$(cd "$(dirname "$1")" && pwd)/$(basename "$1")
command -v node >/dev/null 2>&1 || { echo "node is not installed: skipped"; exit 77; }
here=$(cd "$(dirname "$0")" && pwd)
exec timeout 90 node "$here/vscode_test.js" "$knowable"
