#!/bin/sh
# Fetches the vendored JavaScript libraries of the field app again from the
# npm registry, at the pinned versions, and checks them against SHA256SUMS.
# Needs curl, tar and sha256sum (no Node, no npm).
#
#   templates/field/vendor/fetch.sh           # check what is here against a fresh download
#   templates/field/vendor/fetch.sh --write   # replace the files here with the fresh download
#
# Library | version | file here         | from the package    | licence
# fflate  | 0.8.3   | fflate.js         | esm/browser.js      | MIT (fflate.LICENSE)
# exifr   | 7.1.3   | exifr.js          | dist/mini.esm.js    | MIT (exifr.LICENSE)
# leaflet | 1.9.4   | leaflet.js, .css  | dist/leaflet.js, dist/leaflet.css | BSD-2-Clause (leaflet.LICENSE)
# @fluent/bundle | 0.19.1 | fluent-bundle/*.js | esm/*.js (ES modules; not the .d.ts, not ast.js: types only) | Apache-2.0 (fluent-bundle.LICENSE: the package ships no licence file; its package.json names Apache-2.0, checked below, and the text is the licence's own)
set -eu

here=$(cd "$(dirname "$0")" && pwd)
registry=${NPM_REGISTRY:-https://registry.npmjs.org}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

fetch() { # name version
    curl -sSfL -o "$work/$1-$2.tgz" "$registry/$1/-/$1-$2.tgz"
    mkdir -p "$work/$1"
    tar -xzf "$work/$1-$2.tgz" -C "$work/$1"
}

fetch fflate 0.8.3
cp "$work/fflate/package/esm/browser.js" "$work/fflate.js"
cp "$work/fflate/package/LICENSE" "$work/fflate.LICENSE"
fetch exifr 7.1.3
cp "$work/exifr/package/dist/mini.esm.js" "$work/exifr.js"
cp "$work/exifr/package/LICENSE" "$work/exifr.LICENSE"
fetch leaflet 1.9.4
cp "$work/leaflet/package/dist/leaflet.js" "$work/leaflet.js"
cp "$work/leaflet/package/dist/leaflet.css" "$work/leaflet.css"
cp "$work/leaflet/package/LICENSE" "$work/leaflet.LICENSE"
curl -sSfL -o "$work/fluent-bundle-0.19.1.tgz" "$registry/@fluent/bundle/-/bundle-0.19.1.tgz"
mkdir -p "$work/fluent" "$work/fluent-bundle"
tar -xzf "$work/fluent-bundle-0.19.1.tgz" -C "$work/fluent"
grep -q '"license": "Apache-2.0"' "$work/fluent/package/package.json"
for f in builtins bundle index memoizer resolver resource scope types; do
    cp "$work/fluent/package/esm/$f.js" "$work/fluent-bundle/$f.js"
done
cp "$here/fluent-bundle.LICENSE" "$work/fluent-bundle.LICENSE"

# Every line of SHA256SUMS must match the fresh download.
(cd "$work" && sha256sum -c "$here/SHA256SUMS")

if [ "${1:-}" = "--write" ]; then
    cp "$work/fflate.js" "$work/fflate.LICENSE" "$work/exifr.js" "$work/exifr.LICENSE" \
        "$work/leaflet.js" "$work/leaflet.css" "$work/leaflet.LICENSE" "$here/"
    mkdir -p "$here/fluent-bundle" && cp "$work"/fluent-bundle/*.js "$here/fluent-bundle/"
    echo "vendored files replaced"
fi
# And the files here must match too.
(cd "$here" && grep -v '\.tgz$' SHA256SUMS | sha256sum -c -)
