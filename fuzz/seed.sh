#!/usr/bin/env bash
# Seed the fuzz corpus with the demo cases and the bad-input corpus.
set -euo pipefail
cd "$(dirname "$0")"
mkdir -p corpus/parse_case
cp ../cases/*.toml ../tests/bad_cases/*.toml corpus/parse_case/
