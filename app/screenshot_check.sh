#!/usr/bin/env bash
# screenshot_check.sh opens the real Kinetarium window under a virtual X
# display (xvfb-run), runs the default example (or the model file $1),
# saves a screenshot and checks it is a real picture: a PNG of at least
# 800×500 pixels with more than 50 distinct colours, not nearly one colour.
# It does the same with the Diagram view (--view diagram) and checks the
# diagram's region, and with measurements over the curves (--data), the fit
# window (--view fit) and the sensitivity window (--view sensitivity). Set
# SHOT, SHOT_DIAGRAM, SHOT_DATA, SHOT_FIT, SHOT_SENS to keep the pictures.
set -euo pipefail
cd "$(dirname "$0")/.."
if [[ $# -gt 0 ]]; then export MODEL=$(realpath "$1"); fi
go test -count=1 -tags xvfb -run '^TestScreenshot(Diagram|Measurements|Fit|Sensitivity)?$' ./app
