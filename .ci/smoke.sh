#!/usr/bin/env bash
# Smoke test: the real binary opens a real window under Xvfb, draws something, and closes.
#   .ci/smoke.sh BINARY FILE
set -euo pipefail
bin=${1:?binary}; file=${2:?project file}
shot=$(mktemp --suffix=.png)
disp=":$(( (RANDOM % 300) + 400 ))"
Xvfb "$disp" -screen 0 1280x800x24 >/dev/null 2>&1 & xvfb=$!
trap 'kill $app $xvfb 2>/dev/null || true; rm -f "$shot"' EXIT
sleep 1
DISPLAY=$disp "$bin" "$file" >/tmp/ramify-smoke.log 2>&1 & app=$!
for _ in $(seq 1 30); do
	sleep 1
	kill -0 "$app" 2>/dev/null || { echo "smoke: ramify exited early:"; cat /tmp/ramify-smoke.log; exit 1; }
	if DISPLAY=$disp xwininfo -root -tree 2>/dev/null | grep -q '"Ramify'; then break; fi
done
sleep 3
DISPLAY=$disp import -window root "$shot"
colours=$(convert "$shot" -format '%k' info:)
echo "smoke: window open, screenshot has $colours colours"
[ "$colours" -gt 20 ] || { echo "smoke: the screenshot is blank"; exit 1; }
kill "$app"; wait "$app" 2>/dev/null || true
echo "1 passed, 0 failed"
