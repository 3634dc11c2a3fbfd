#!/bin/sh
# Fills fuzz/corpus/<target>/ with seeds from the project's fixtures (run from the repository
# root). The corpus itself is not kept in git; the minimized failing inputs are, under
# tests/fixtures/fuzz/<target>/.
set -eu
for t in config subject manifest table trial; do mkdir -p "fuzz/corpus/$t"; done
cp examples/data/squat-config.toml fuzz/corpus/config/
cargo run -q -- config --print-default > fuzz/corpus/config/default.toml
cp examples/data/maren.toml examples/data/noa.toml examples/data/tobin.toml fuzz/corpus/subject/
cp examples/data/manifest.csv fuzz/corpus/manifest/
cp anthropometry/*.csv fuzz/corpus/table/
cp tests/fixtures/trial_*.csv fuzz/corpus/trial/
# The first frames of the bundled walk: its header and a few rows.
head -c 6000 examples/data/walk.csv > fuzz/corpus/trial/walk-head.csv
for d in tests/fixtures/fuzz/*/; do
  t=$(basename "$d")
  if [ -d "fuzz/corpus/$t" ]; then cp "$d"* "fuzz/corpus/$t/" 2>/dev/null || true; fi
done
