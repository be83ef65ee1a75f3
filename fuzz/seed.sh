#!/usr/bin/env bash
# Seed the fuzz corpora (fuzz/corpus/<target>/, which git ignores) from the repository's own
# files: small slices of sample_sessions/, the broken-input cases in tests/inputs/, and two
# small model files trained on a slice of a sample set. Safe to run again: it only (re)writes
# the seed files it names. See DEVELOPERS.md, "Fuzzing".
set -euo pipefail
cd "$(dirname "$0")/.."
corpus=fuzz/corpus
mkdir -p "$corpus/import_csv" "$corpus/import_jsonl" "$corpus/model_file"

# Events file, then a NUL byte, then the outcomes file: the split the import_csv target makes.
csv_seed() { # NAME EVENTS [OUTCOMES]
    {
        cat "$2"
        if [ -n "${3:-}" ] && [ -f "$3" ]; then
            printf '\0'
            cat "$3"
        fi
    } > "$corpus/import_csv/$1"
}

# A CSV without quoted fields as JSON Lines: header names as keys, numbers unquoted, empty
# fields left out (good enough for the sample files, which have no quotes or embedded commas).
csv_to_jsonl() {
    awk -F, 'NR == 1 { for (i = 1; i <= NF; i++) key[i] = $i; n = NF; next }
        { line = "{"; sep = ""
          for (i = 1; i <= n; i++) if ($i != "") {
              v = ($i ~ /^-?[0-9]+(\.[0-9]+)?$/) ? $i : "\"" $i "\""
              line = line sep "\"" key[i] "\":" v; sep = ","
          }
          print line "}" }' "$1"
}

tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT

# Sample sets: the header and the first 40 event rows, with the outcomes of the sessions in them.
for set in sample_sessions/*/; do
    name=$(basename "$set")
    head -n 41 "$set/events.csv" > "$tmp/$name.events.csv"
    cut -d, -f1 "$tmp/$name.events.csv" | tail -n +2 | sort -u > "$tmp/$name.ids"
    { head -n 1 "$set/outcomes.csv"; grep -F -f <(sed 's/$/,/' "$tmp/$name.ids") "$set/outcomes.csv" || true; } \
        > "$tmp/$name.outcomes.csv"
    csv_seed "sample-$name" "$tmp/$name.events.csv" "$tmp/$name.outcomes.csv"
    csv_seed "sample-$name-no-outcomes" "$tmp/$name.events.csv"
    csv_to_jsonl "$tmp/$name.events.csv" > "$corpus/import_jsonl/sample-$name"
done

# The broken-input cases, each as it is.
for case in tests/inputs/*/; do
    name=$(basename "$case")
    [ -f "$case/events.csv" ] && csv_seed "input-$name" "$case/events.csv" "$case/outcomes.csv"
    [ -f "$case/events.jsonl" ] && cp "$case/events.jsonl" "$corpus/import_jsonl/input-$name"
    for f in "$case"sessions/*.csv; do
        [ -f "$f" ] && csv_seed "input-$name-$(basename "$f" .csv)" "$f"
    done
done

# Models: a logistic one trained on the small exercise set, and a boosted one trained on the
# first 100 sessions of a board-game set (boosted trees need at least 60 training sessions).
slice() { # SET SESSIONS OUT
    mkdir -p "$3"
    ids=$(cut -d, -f1 "$1/outcomes.csv" | sed -n "2,$(( $2 + 1 ))p")
    for f in events outcomes; do
        awk -F, -v ids="$ids" 'BEGIN { n = split(ids, a, "\n"); for (i = 1; i <= n; i++) keep[a[i]] = 1 }
            NR == 1 || ($1 in keep)' "$1/$f.csv" > "$3/$f.csv"
    done
}
slice sample_sessions/tarnsluice-exercise 16 "$tmp/exercise"
slice sample_sessions/vessmire-a 100 "$tmp/board"
cargo build --release --quiet --no-default-features
train() { # SET KIND
    target/release/tellturn train "$1" --model "$2" --no-learning-curve --quiet \
        --model-out "$corpus/model_file/trained-$2.json" > /dev/null
}
train "$tmp/exercise" logistic
train "$tmp/board" boosted
echo "seeded: $(ls "$corpus/import_csv" | wc -l) csv, $(ls "$corpus/import_jsonl" | wc -l) jsonl, $(ls "$corpus/model_file" | wc -l) model inputs"
