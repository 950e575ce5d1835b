#!/usr/bin/env bash
# All three load runs, one after another (about 5 minutes on 2 cores); figures go to stdout.
set -euo pipefail
here="$(dirname "$0")"
bash "$here/ingest.sh"
SKIP_BUILD=1 bash "$here/mixed.sh"
SKIP_BUILD=1 bash "$here/upload.sh"
