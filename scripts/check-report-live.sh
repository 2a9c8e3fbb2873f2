#!/usr/bin/env bash
# Check the report's choice of target in headless Chromium against the
# command line. Writes a small fresh frontier report of scenarios/b0.toml
# (seed from the scenario) to target/report-check/live, then for several
# targets opens index.html#target=T (the page enters T into its target box
# and fires the box's input event, as typing does), lets the script run,
# and reads back the page: each policy's chance, which policies stay
# non-dominated, the cheapest policy for each chance level and each
# policy's chance with its interval in the policies table. These must
# equal what `wearout frontier --policies result.json --target T --json`
# gives on the same validation trials (the same policies re-costed: a new
# search at T could find other policies, so the list is fixed).
#
# Needs Debian's chromium and python3 (standard library only); installs
# nothing (.ci/run installs chromium). Exits 1 on any difference.
set -euo pipefail
cd "$(dirname "$0")/.."
for tool in chromium python3; do
    if ! command -v "$tool" >/dev/null 2>&1; then
        echo "check-report-live: $tool not found" >&2
        exit 1
    fi
done
validate=2000
dir="target/report-check/live"
rm -rf "$dir"
mkdir -p target/report-check
cargo build --release --quiet
bin="target/release/wearout"
"$bin" frontier scenarios/b0.toml --trials 300 --validate-trials "$validate" \
    --report-dir "$dir" >/dev/null
if grep -Eiq 'https?:|ftp:|//[a-z0-9.-]+\.[a-z]{2,}|www\.' "$dir/index.html"; then
    echo "check-report-live: $dir/index.html names a network address" >&2
    exit 1
fi
abs="$(cd "$dir" && pwd)/index.html"
profile="$(mktemp -d)"
work="$(mktemp -d)"
trap 'rm -rf "$profile" "$work"' EXIT
# Targets in percent: the report's own (97), others up and down, and ones
# that fall between the chance levels' answers.
for t in 97 96.12 90 98.55 99.5 85; do
    frac=$(python3 -c "print('%.4f' % ($t / 100))")
    timeout 120 chromium --headless --no-sandbox --disable-gpu --no-first-run \
        --disable-background-networking --disable-component-update --disable-sync \
        --disable-quic --user-data-dir="$profile" --virtual-time-budget=5000 \
        --dump-dom "file://$abs#target=$t" >"$work/dom-$t.html" 2>/dev/null || true
    "$bin" frontier scenarios/b0.toml --policies "$dir/result.json" \
        --validate-trials "$validate" --target "$frac" --json >"$work/cli-$t.json" 2>/dev/null
    python3 - "$work/dom-$t.html" "$work/cli-$t.json" "$frac" <<'PY'
import html, json, math, re, sys

dom = open(sys.argv[1], encoding="utf-8").read()
cli = json.load(open(sys.argv[2], encoding="utf-8"))
target = sys.argv[3]
fail = []

m = re.search(r'data-wo-target="([^"]*)"', dom)
if not m or float(m.group(1)) != float(target):
    sys.exit(f"target {target}: the page did not take the target (script not run?)")

# The figure: every policy's chance as shown, and which stay non-dominated.
shown, kept = {}, set()
for g in re.finditer(r'<g class="wo-pt"([^>]*)>', dom):
    a = dict(re.findall(r'([\w-]+)="([^"]*)"', g.group(1)))
    name = html.unescape(a["data-name"])
    shown[name] = float(a["data-shown"])
    if a.get("opacity") == "1":
        kept.add(name)
if not shown:
    fail.append("no frontier points in the page")
names = [p["name"] for p in cli["policies"]]
for p in cli["policies"]:
    if shown.get(p["name"]) != p["chance"]["value"]:
        fail.append(f'{p["name"]}: page {shown.get(p["name"])}, command line {p["chance"]["value"]}')
if kept != set(names):
    fail.append(f"non-dominated: page {sorted(kept)}, command line {sorted(names)}")

# The cheapest policy for each chance level (the report's levels).
def pct(x):
    # As the command line's words: a tenth of a point, halves away from
    # zero (Rust's f64::round), then Rust's formatting (halves to even,
    # as Python's).
    p = math.floor(1000 * x + 0.5) / 10
    s = f"{p:.1f}" if (0 < p < 1 or 99 < p < 100) else f"{p:.0f}"
    return s + "\u00a0%"

levels = [0.5, 0.6, 0.7, 0.8, 0.9, 0.95, 0.99]
want = []
for level in levels:
    pick = next((p["name"] for p in cli["policies"] if p["chance"]["value"] >= level - 1e-12), "")
    if not want or want[-1] != pick:
        want.append(pick)
table = dom.split('id="levels"', 1)[-1].split("<h2", 1)[0]
got = [html.unescape(x) for x in re.findall(r'<tr data-pick="([^"]*)"', table)]
if got != want:
    fail.append(f"cheapest per level: page {got}, command line {want}")

# Each policy's chance with its Wilson interval in the policies table.
ptable = dom.split('id="policies"', 1)[-1].split("<h2", 1)[0]
rows = {}
tables = [t for t in re.findall(r"<table.*?</table>", ptable, re.S) if re.search(r"<th[^>]*>\s*chance", t)]
for row in re.findall(r"<tr[^>]*>(.*?)</tr>", tables[0] if tables else "", re.S):
    cells = [html.unescape(re.sub(r"<[^>]+>", "", c)).strip() for c in re.findall(r"<t[dh][^>]*>(.*?)</t[dh]>", row, re.S)]
    if len(cells) > 1:
        # The first cell names the policy and its code: `F3 (1EAEAR)`.
        rows[re.sub(r" \([0-9A-Z]+\)$", "", cells[0])] = cells[1]
for p in cli["policies"]:
    c = p["chance"]
    text = f'{pct(c["value"])} [{pct(c["lo"])} to {pct(c["hi"])}]'
    if rows.get(p["name"]) != text:
        fail.append(f'{p["name"]} in the policies table: page {rows.get(p["name"])!r}, command line {text!r}')

if fail:
    print(f"target {target}:", *fail, sep="\n  ", file=sys.stderr)
    sys.exit(1)
print(f"target {target}: {len(names)} non-dominated policies, chances, levels and intervals agree")
PY
done
echo "check-report-live: the page's target control agrees with the command line"
