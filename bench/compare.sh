#!/usr/bin/env bash
# Side-by-side timing of loadfit against general-purpose peers on the same synthetic library:
# pandas (read_csv, then the equivalent filter and sort) for load + fit, and `fzf --filter` for
# search. Medians of 3 runs, whole process, with peak memory. Installs pandas into a scratch
# virtual environment and fzf from Debian when they are missing. Writes nothing in the repo.
#
# usage: bash bench/compare.sh [ROWS...]        (default: 100000 1000000)
set -euo pipefail
cd "$(dirname "$0")/.."
rows=("${@:-100000 1000000}")
[ $# -eq 0 ] && rows=(100000 1000000)
scratch=${SCRATCH:-/tmp/loadfit-bench}
mkdir -p "$scratch"

cargo build --release --quiet
bin=target/release/loadfit

if [ ! -x "$scratch/venv/bin/python" ]; then
  python3 -m venv "$scratch/venv"
  "$scratch/venv/bin/pip" install --quiet pandas
fi
py="$scratch/venv/bin/python"
if ! command -v fzf >/dev/null 2>&1; then
  apt-get update -qq && apt-get install -y -qq fzf >/dev/null
fi

cat > "$scratch/peer.py" <<'PY'
import sys, pandas as pd
# The equivalent of `loadfit fit data/stages/door-strike.toml --limit 20` for the switch role:
# NPNs and N-MOSFETs whose voltage and current ratings cover the needs, best price first.
df = pd.read_csv(sys.argv[1], low_memory=False)
num = lambda col: pd.to_numeric(df[col].astype(str).str.extract(r'([-+0-9.eE]+)')[0], errors='coerce')
vceo, ic = num('vceo'), num('ic_max')
vds, idm = num('vds'), num('id_max')
ok = ((df['kind'] == 'npn') & (vceo >= 17.8) & (ic >= 688)) | ((df['kind'] == 'nmos') & (vds >= 17.8) & (idm >= 0.688))
print(df[ok].sort_values('price').head(20)[['part', 'price']].to_string())
PY

median() { sort -n | awk '{a[NR]=$1} END {print a[int((NR+1)/2)]}'; }
measure() { # prints "seconds peak_kb" medians of 3 runs of the command
  local t m
  for _ in 1 2 3; do
    /usr/bin/time -f "%e %M" -o "$scratch/time" "$@" >/dev/null 2>&1 || true
    tail -n 1 "$scratch/time"
  done > "$scratch/runs"
  t=$(cut -d' ' -f1 "$scratch/runs" | median)
  m=$(cut -d' ' -f2 "$scratch/runs" | median)
  echo "$t $m"
}

printf '%-9s %-8s %-34s %9s %10s\n' rows size task "median s" "peak MB"
for n in "${rows[@]}"; do
  csv="$scratch/parts-$n.csv"
  [ -f "$csv" ] || "$bin" gen --rows "$n" --seed 1 --out "$csv" >/dev/null
  size=$(( $(stat -c %s "$csv") / 1048576 ))
  "$py" -c "import csv,sys; r=csv.DictReader(open('$csv')); [print(' '.join([x['part'],x['maker'],x['package'],x['tags']])) for x in r]" > "$scratch/strings-$n.txt"
  read -r lt lm < <(measure "$bin" fit data/stages/door-strike.toml --parts "$csv" --limit 20)
  read -r pt pm < <(measure "$py" "$scratch/peer.py" "$csv")
  read -r ft fm < <(measure sh -c 'fzf --filter "sqn cal" < "$1"' fzf "$scratch/strings-$n.txt")
  printf '%-9s %-8s %-34s %9s %10s\n' "$n" "${size}MB" "loadfit fit --limit 20" "$lt" "$((lm/1024))"
  printf '%-9s %-8s %-34s %9s %10s\n' "$n" "${size}MB" "pandas read_csv + filter + sort" "$pt" "$((pm/1024))"
  printf '%-9s %-8s %-34s %9s %10s\n' "$n" "${size}MB" "fzf --filter (search strings)" "$ft" "$((fm/1024))"
  awk -v a="$lt" -v b="$pt" -v m="$lm" -v s="$(stat -c %s "$csv")" 'BEGIN {printf "          ratio loadfit / pandas: %.2f (target <= 0.3); peak / file: %.2f (target <= 1.8)\n", a/b, m*1024/s}'
done
