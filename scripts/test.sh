#!/usr/bin/env bash
# The project's test command: every Rust test in the workspace (unit, integration, doc, property).
set -euo pipefail
cd "$(dirname "$0")/.."
scripts/ensure-deps.sh
cargo test --workspace --quiet "$@"
