#!/bin/sh
# SPDX-License-Identifier: MIT
#
# test-viewer.sh — the replay viewer end to end (meson test 'viewer').
# Arguments: the stripfleet program, the stripfleet-replay program, the
# demo scenario (scenarios/demo-strip.json, invented).  Checks, against the
# documented behaviour in docs/viewer.md:
#   - the same run and time give byte-identical PNG frames (determinism,
#     analytic: the frame depends on the log alone), written atomically (no
#     temporary file left beside them), with the PNG signature (ISO/IEC
#     15948:2004, 5.2: bytes 89 50 4E 47 0D 0A 1A 0A);
#   - --frames 3 under SDL_VIDEODRIVER=dummy opens, draws and exits 0;
#   - bad input fails with a non-zero exit and a message naming file:line.
set -eu
SF=$1
VIEW=$2
SCEN=$3
T=$(mktemp -d "${TMPDIR:-/tmp}/sf-viewer-XXXXXX")
trap 'rm -rf "$T"' EXIT

fail() { echo "not ok - $*"; exit 1; }

$SF run "$SCEN" --out "$T/run" --no-charts > /dev/null

$VIEW --at 100 --png "$T/a.png" "$SCEN" "$T/run" || fail "--png exited $?"
$VIEW --at 100 --png "$T/b.png" "$SCEN" "$T/run" || fail "--png (second) exited $?"
cmp -s "$T/a.png" "$T/b.png" || fail "two frames at the same time differ"
[ "$(od -An -tx1 -N8 "$T/a.png" | tr -d ' \n')" = 89504e470d0a1a0a ] || fail "not a PNG"
ls -A "$T" | grep -q '^\.' && fail "a temporary file was left: $(ls -A "$T")"
$VIEW --at 101 --png "$T/c.png" "$SCEN" "$T/run" || fail "--png at 101 h exited $?"
cmp -s "$T/a.png" "$T/c.png" && fail "frames an hour apart are identical"
echo "ok - --png twice gives byte-identical frames"

SDL_VIDEODRIVER=dummy $VIEW --frames 3 --at 50 "$SCEN" "$T/run" || fail "--frames 3 exited $?"
echo "ok - --frames 3 under the dummy video driver"

# bad input: a log cut short, a folder without a log, a bad option
head -c 2000 "$T/run/events.log" > "$T/cut.log"
mkdir "$T/cut" && mv "$T/cut.log" "$T/cut/events.log"
if $VIEW --png "$T/x.png" "$SCEN" "$T/cut" 2> "$T/err"; then fail "a cut log was accepted"; fi
grep -q "events.log:[0-9]*: the line is cut short" "$T/err" || fail "message: $(cat "$T/err")"
[ ! -e "$T/x.png" ] || fail "a PNG was written for a bad log"
if $VIEW --png "$T/x.png" "$SCEN" "$T/nowhere" 2> "$T/err"; then fail "a missing log was accepted"; fi
grep -q "nowhere/events.log" "$T/err" || fail "message: $(cat "$T/err")"
set +e
$VIEW --speed 0 "$SCEN" "$T/run" 2> "$T/err"; rc=$?
set -e
[ $rc -eq 2 ] || fail "--speed 0 exited $rc, expected 2"
echo "ok - bad input refused"
