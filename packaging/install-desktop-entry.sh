#!/usr/bin/env bash
# Put Scalewright in the desktop's application menu (for the current user only), after
# `pip install .`: the desktop entry, the icon in every size, and the AppStream metadata.
set -euo pipefail
app_id=io.github.scalewright.Scalewright
resources=$(python3 -c "from importlib.resources import files; print(files('scalewright.resources'))")
share="${XDG_DATA_HOME:-$HOME/.local/share}"
icons="$share/icons/hicolor"
mkdir -p "$share/applications" "$share/metainfo" "$icons/scalable/apps"
install -m 644 "$resources/$app_id.desktop" "$share/applications/$app_id.desktop"
install -m 644 "$resources/$app_id.metainfo.xml" "$share/metainfo/$app_id.metainfo.xml"
install -m 644 "$resources/scalewright.svg" "$icons/scalable/apps/$app_id.svg"
for size in 16 32 48 64 128 256; do
    mkdir -p "$icons/${size}x${size}/apps"
    install -m 644 "$resources/scalewright-$size.png" "$icons/${size}x${size}/apps/$app_id.png"
done
echo "installed $share/applications/$app_id.desktop"
