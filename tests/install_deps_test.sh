#!/usr/bin/env bash
# tools/install-deps on a machine that lacks a package: it must name the
# package, not stop. (dpkg-query exits 1 for a package that is not
# installed; under set -e and pipefail that once ended the script silently,
# so the first README command failed on every fresh machine.)
set -euo pipefail
root=$(cd "$(dirname "$0")/.." && pwd)
out=$("$root/tools/install-deps" --missing rxtrain-test-no-such-package)
case "$out" in
  *rxtrain-test-no-such-package*) echo "ok: the missing package is named" ;;
  *) echo "FAIL: tools/install-deps --missing printed: '$out'" >&2; exit 1 ;;
esac
