#!/usr/bin/env bash
# Put Scalewright in the desktop's application menu (for the current user only).
set -euo pipefail
resources=$(python3 -c "from importlib.resources import files; print(files('scalewright.resources'))")
apps="${XDG_DATA_HOME:-$HOME/.local/share}/applications"
icons="${XDG_DATA_HOME:-$HOME/.local/share}/icons/hicolor/scalable/apps"
mkdir -p "$apps" "$icons"
install -m 644 "$resources/scalewright.desktop" "$apps/scalewright.desktop"
install -m 644 "$resources/scalewright.svg" "$icons/scalewright.svg"
echo "installed $apps/scalewright.desktop"
