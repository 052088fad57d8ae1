#!/usr/bin/env bash
# Smoke test: the real binary opens a real window under Xvfb, draws something, and closes.
#   .ci/smoke.sh BINARY FILE
set -euo pipefail
bin=${1:?binary}; file=${2:?project file}
work=$(mktemp -d)
shot=$work/shot.png
disp=":$(( (RANDOM % 300) + 400 ))"
Xvfb "$disp" -screen 0 1280x800x24 >/dev/null 2>&1 & xvfb=$!
app=""
trap 'kill $app $xvfb 2>/dev/null || true; rm -rf "$work"' EXIT
sleep 1
# A private home: no recovery file or preferences from the person running the test.
HOME=$work XDG_CONFIG_HOME=$work/config DISPLAY=$disp "$bin" "$file" >"$work/app.log" 2>&1 & app=$!
found=""
for _ in $(seq 1 60); do
	sleep 0.5
	kill -0 "$app" 2>/dev/null || { echo "smoke: ramify exited early:"; cat "$work/app.log"; exit 1; }
	# The window title is "FILE — Ramify".
	if DISPLAY=$disp xwininfo -root -tree 2>/dev/null | grep -q 'Ramify"'; then found=yes; break; fi
done
[ -n "$found" ] || { echo "smoke: no Ramify window appeared within 30 s"; cat "$work/app.log"; exit 1; }
sleep 2 # first paint
DISPLAY=$disp import -window root "$shot"
colours=$(convert "$shot" -format '%k' info:)
echo "smoke: window open, screenshot has $colours colours"
[ "$colours" -gt 20 ] || { echo "smoke: the screenshot is blank"; exit 1; }
kill "$app"
for _ in $(seq 1 20); do kill -0 "$app" 2>/dev/null || break; sleep 0.25; done
if kill -0 "$app" 2>/dev/null; then echo "smoke: ramify did not close"; exit 1; fi
echo "1 passed, 0 failed"
