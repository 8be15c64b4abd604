#!/usr/bin/env bash
# Runs one expected-output case of the codedrift CLI.
#
#   bash run_case.sh <path-to-codedrift> <case_dir>
#
# <case_dir>/cmd is a shell script run with `bash -o pipefail` in a fresh scratch directory
# (removed afterwards), with CODEDRIFT (the binary), CASE (the case directory) and DATA
# (tests/data) in the environment. What it printed and its exit status are then compared with
# whichever of these files the case has (a missing file means "not checked"):
#   stdout, stderr   exact text
#   stdout.re, stderr.re   one extended regular expression per line; each must match at
#                          least one line of the output (for text with paths or timings)
#   exit             the exit status, a number
set -u

if [ $# -ne 2 ]; then
  echo "usage: run_case.sh <path-to-codedrift> <case_dir>" >&2
  exit 2
fi
CODEDRIFT=$(cd "$(dirname "$1")" && pwd)/$(basename "$1")
CASE=$(cd "$2" && pwd)
DATA=$(cd "$(dirname "${BASH_SOURCE[0]}")/../data" && pwd)
export CODEDRIFT CASE DATA

scratch=$(mktemp -d)
trap 'rm -rf "$scratch"' EXIT
actual_out="$scratch/.stdout"
actual_err="$scratch/.stderr"
(cd "$scratch" && bash -o pipefail "$CASE/cmd" >"$actual_out" 2>"$actual_err")
status=$?

failed=0
compare_exact() {  # name expected actual
  if [ -f "$2" ] && ! diff -u "$2" "$3" >"$scratch/.diff"; then
    echo "--- $1 differs (expected vs actual):"
    cat "$scratch/.diff"
    failed=1
  fi
}
compare_patterns() {  # name patterns actual
  [ -f "$2" ] || return 0
  while IFS= read -r pattern || [ -n "$pattern" ]; do
    [ -z "$pattern" ] && continue
    if ! grep -Eq -- "$pattern" "$3"; then
      echo "--- $1 has no line matching: $pattern"
      failed=1
    fi
  done <"$2"
  if [ $failed -ne 0 ]; then
    echo "--- actual $1:"
    cat "$3"
  fi
}

compare_exact stdout "$CASE/stdout" "$actual_out"
compare_exact stderr "$CASE/stderr" "$actual_err"
compare_patterns stdout "$CASE/stdout.re" "$actual_out"
compare_patterns stderr "$CASE/stderr.re" "$actual_err"
if [ -f "$CASE/exit" ]; then
  expected_status=$(tr -d '[:space:]' <"$CASE/exit")
  if [ "$status" != "$expected_status" ]; then
    echo "--- exit status $status, expected $expected_status"
    failed=1
  fi
fi

if [ $failed -ne 0 ]; then
  echo "--- case $(basename "$CASE"): cmd was:"
  cat "$CASE/cmd"
  echo "--- stderr was:"
  cat "$actual_err"
  exit 1
fi
echo "case $(basename "$CASE"): ok"
