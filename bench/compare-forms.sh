#!/usr/bin/env bash
# Runs ../shared/peer/compare.sh (the side-by-side timing of the ingest and
# the numpy peer) on its gzipped copies and on the same copies written
# plain and as zips of one member (the form the archive distributes its
# station files in). The plain and zip runs use a copy of compare.sh whose
# copy-writing line is rewritten here; nothing else in it changes. The
# peer reads all three forms.
# usage: bench/compare-forms.sh [SONDECLIM_BINARY] [WORKERS]   (from the project root)
# needs: the zip command, and what compare.sh needs (python3-numpy python3-pandas)
set -euo pipefail
root=$(cd "$(dirname "$0")/.." && pwd)
peer=$root/../shared/peer
[[ -f $peer/compare.sh ]] || { echo "compare-forms: $peer/compare.sh not found (../shared beside the project)" >&2; exit 1; }
command -v zip >/dev/null || { echo "compare-forms: needs the zip command (apt-get install -y zip)" >&2; exit 1; }
SC=${1:-}; W=${2:-2}
if [[ -z $SC ]]; then SC=$(mktemp -d)/sondeclim; (cd "$root" && go build -o "$SC" ./cmd/sondeclim); fi
work=$(mktemp -d); trap 'rm -rf "$work"' EXIT
# The copy-writing line and the peer's input glob, rewritten per form.
form() {
	local name=$1 write=$2 glob=$3
	sed -e "s#here=\$(cd \"\$(dirname \"\$0\")\" \&\& pwd)#here=$peer#" \
		-e "s#| gzip -1 >\"\$D/in/USM000724\$i-data.txt.gz\"#$write#" \
		-e "s#\"\$D\"/in/\*.gz#\"\$D\"/in/$glob#" "$peer/compare.sh" >"$work/$name.sh"
	grep -q "$glob" "$work/$name.sh" || { echo "compare-forms: compare.sh changed; cannot derive the $name form" >&2; exit 1; }
}
form plain '>"$D/in/USM000724$i-data.txt"' '*.txt'
form zip '>"$D/USM000724$i-data.txt"; (cd "$D" \&\& zip -q -1 -m "in/USM000724$i-data.txt.zip" "USM000724$i-data.txt")' '*.zip'
for f in gzip plain zip; do
	echo "== $f ($(date -u +%H:%M) UTC)"
	if [[ $f == gzip ]]; then (cd "$root" && bash "$peer/compare.sh" "$SC" "$W"); else (cd "$root" && bash "$work/$f.sh" "$SC" "$W"); fi
done
