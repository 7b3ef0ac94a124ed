#!/usr/bin/env bash
# Set up floatlift in .venv and run the demo on the invented sample scenario.
#   bash scripts/demo.sh [options for 'floatlift demo']
set -euo pipefail
cd "$(dirname "$0")/.."
python_bin=${PYTHON:-python3}
if [ ! -x .venv/bin/python ]; then
  "$python_bin" -m venv .venv
fi
.venv/bin/python -m pip install -q --disable-pip-version-check -e .
exec .venv/bin/floatlift demo "$@"
