#!/usr/bin/env bash
# Rewrites the golden manifest from this build and shows which outputs
# moved. Commit the new manifest only with a message that says why.
set -euo pipefail
cd "$(dirname "$0")/../.."
BLANKSMITH_GOLDEN=write cargo test --release --test golden
git diff --stat -- tests/golden/manifest.txt
git diff -U0 -- tests/golden/manifest.txt | grep '^[-+][^-+]' | cut -f1,2 | sort | uniq -c | sort -rn | head -50 || true
