"""Render the application icon (resources/scalewright.svg) into the sizes desktops need.

    python packaging/make_icons.py

writes, beside the SVG in resources/:
- scalewright-16.png ... scalewright-256.png (the freedesktop icon theme sizes),
- scalewright.ico (Windows: the same sizes, each stored as PNG inside the .ico),
- scalewright.icns (macOS: 16 to 1024 pixels, each stored as PNG inside the .icns).

Rendering uses Qt's own SVG renderer offscreen (no other tool is needed); the .ico and
.icns containers are written here byte by byte, following their published layouts.
Run it again whenever the SVG changes; tests/packaging/test_resources.py checks that the
committed files are what it renders.
"""

from __future__ import annotations

import os
import struct
import sys
from pathlib import Path

RESOURCES = Path(__file__).resolve().parents[1] / "resources"
SVG = RESOURCES / "scalewright.svg"
PNG_SIZES = (16, 32, 48, 64, 128, 256)
# Apple's icon types that hold PNG data, by pixel size (Apple's "icns" type codes).
ICNS_TYPES = (
    ("icp4", 16),
    ("icp5", 32),
    ("icp6", 64),
    ("ic07", 128),
    ("ic08", 256),
    ("ic09", 512),
    ("ic10", 1024),
)


def _app():
    os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    from PySide6.QtGui import QGuiApplication

    return QGuiApplication.instance() or QGuiApplication([sys.argv[0]])


def render(size: int, svg: Path = SVG):
    """The SVG drawn into a transparent size x size QImage."""
    from PySide6.QtCore import Qt
    from PySide6.QtGui import QImage, QPainter
    from PySide6.QtSvg import QSvgRenderer

    _app()
    renderer = QSvgRenderer(str(svg))
    if not renderer.isValid():
        raise SystemExit(f"{svg}: not a valid SVG file")
    image = QImage(size, size, QImage.Format.Format_ARGB32)
    image.fill(Qt.GlobalColor.transparent)
    painter = QPainter(image)
    painter.setRenderHint(QPainter.RenderHint.Antialiasing)
    painter.setRenderHint(QPainter.RenderHint.SmoothPixmapTransform)
    renderer.render(painter)
    painter.end()
    return image


def png_bytes(size: int, svg: Path = SVG) -> bytes:
    from PySide6.QtCore import QBuffer, QByteArray, QIODevice

    data = QByteArray()
    buffer = QBuffer(data)
    buffer.open(QIODevice.OpenModeFlag.WriteOnly)
    if not render(size, svg).save(buffer, "PNG"):
        raise SystemExit(f"could not encode the {size} px icon as PNG")
    buffer.close()
    return bytes(data.data())


def ico_bytes(images: dict[int, bytes]) -> bytes:
    """An .ico file: a 6-byte header, one 16-byte entry per image, then the PNG data."""
    sizes = sorted(images)
    header = struct.pack("<HHH", 0, 1, len(sizes))
    offset = 6 + 16 * len(sizes)
    entries, blobs = b"", b""
    for size in sizes:
        blob = images[size]
        side = 0 if size >= 256 else size  # 0 stands for 256
        entries += struct.pack("<BBBBHHII", side, side, 0, 0, 1, 32, len(blob), offset)
        blobs += blob
        offset += len(blob)
    return header + entries + blobs


def icns_bytes(images: dict[int, bytes]) -> bytes:
    """An .icns file: 'icns' and the total length, then (type, length, PNG data) chunks."""
    chunks = b"".join(
        kind.encode("ascii") + struct.pack(">I", 8 + len(images[size])) + images[size]
        for kind, size in ICNS_TYPES
    )
    return b"icns" + struct.pack(">I", 8 + len(chunks)) + chunks


def expected_files(svg: Path = SVG) -> dict[str, bytes]:
    """File name (in resources/) -> content, for every icon file this script writes."""
    sizes = sorted({*PNG_SIZES, *(size for _kind, size in ICNS_TYPES)})
    pngs = {size: png_bytes(size, svg) for size in sizes}
    files = {f"scalewright-{size}.png": pngs[size] for size in PNG_SIZES}
    files["scalewright.ico"] = ico_bytes({size: pngs[size] for size in PNG_SIZES})
    files["scalewright.icns"] = icns_bytes(pngs)
    return files


def main() -> int:
    for name, content in expected_files().items():
        target = RESOURCES / name
        staged = target.with_name(target.name + ".tmp")
        staged.write_bytes(content)
        staged.replace(target)
        print(f"wrote {target.relative_to(RESOURCES.parent)} ({len(content):,} bytes)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
