#!/usr/bin/env bash
# Fails when Cargo.toml declares a dependency the code never names.
# A [dependencies] crate must be named (as `crate_name::` or `use crate_name`)
# in src/; a [dev-dependencies] crate in src/, tests/ or scripts/.
set -euo pipefail
cd "$(dirname "$0")/.."

# Prints "section name" for each dependency declared in Cargo.toml.
declared() {
    awk '
        /^\[/ { section = $0; next }
        (section == "[dependencies]" || section == "[dev-dependencies]") && /^[A-Za-z0-9_-]+[[:space:]]*=/ {
            split($0, parts, /[[:space:]]*=/); print section, parts[1]
        }' Cargo.toml
}

unused=0
while read -r section name; do
    ident=${name//-/_}
    folders=(src)
    [ "$section" = "[dev-dependencies]" ] && folders=(src tests scripts)
    if ! grep -rqE "(\b${ident}::|use ${ident}\b|${ident}!)" "${folders[@]}" 2>/dev/null; then
        echo "unused dependency: ${name} (${section}) is named nowhere in ${folders[*]}" >&2
        unused=1
    fi
done < <(declared)
if [ "$unused" -eq 0 ]; then
    echo "every declared dependency is used"
fi
exit "$unused"
