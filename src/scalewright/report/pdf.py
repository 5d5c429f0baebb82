"""The report as a PDF, printed by Qt from the same HTML as the web page.

Qt's rich text does not draw inline SVG, so each histogram is drawn to a PNG-like image by
QtSvg first and handed to the document as a resource. Qt is imported only here, and only
when a PDF is asked for; without a display the offscreen platform is used, so the command
line makes PDFs on a server too.
"""

from __future__ import annotations

import os
import sys
from pathlib import Path

from ..errors import ScalewrightError
from ..io import atomic_path
from .content import Figure, Report
from .html import render_html
from .svg import HEIGHT, WIDTH

# Two histograms side by side must fit the width of an A4 page: Qt lays the page out at
# 96 pixels per inch, and QTextDocument.print_ keeps a 2 cm margin of its own (so the
# writer is given none), which leaves about 640 pixels.
PRINTED_WIDTH = 300
SHARPNESS = 2  # images are drawn at this multiple of their own size (about 290 dpi printed)

_app = None  # the QGuiApplication made here when the caller had none


def _gui_application():
    """The running Qt application, or a new offscreen one (fonts need one)."""
    global _app
    from PySide6.QtGui import QGuiApplication

    existing = QGuiApplication.instance()
    if existing is not None:
        return existing
    if not os.environ.get("QT_QPA_PLATFORM") and not (
        os.environ.get("DISPLAY")
        or os.environ.get("WAYLAND_DISPLAY")
        or sys.platform in ("win32", "darwin")
    ):
        os.environ["QT_QPA_PLATFORM"] = "offscreen"
    _app = QGuiApplication(["scalewright"])
    return _app


def svg_to_image(svg_text: str, scale: float = SHARPNESS):
    """The SVG drawn onto a white QImage ``scale`` times its own size."""
    from PySide6.QtCore import QByteArray, QSize
    from PySide6.QtGui import QColor, QImage, QPainter
    from PySide6.QtSvg import QSvgRenderer

    renderer = QSvgRenderer(QByteArray(svg_text.encode("utf-8")))
    if not renderer.isValid():
        raise ScalewrightError("a histogram of the report could not be drawn (invalid image)")
    size = renderer.defaultSize()
    image = QImage(
        QSize(round(size.width() * scale), round(size.height() * scale)),
        QImage.Format.Format_RGB32,
    )
    image.fill(QColor("white"))
    painter = QPainter(image)
    painter.setRenderHint(QPainter.RenderHint.Antialiasing)
    renderer.render(painter)
    painter.end()
    return image


def write_pdf(report: Report, target: str | os.PathLike) -> None:
    """Print ``report`` to an A4 PDF at ``target`` (written to a temporary file first)."""
    _gui_application()
    from PySide6.QtCore import QMarginsF, QUrl
    from PySide6.QtGui import QPageLayout, QPageSize, QPdfWriter, QTextDocument

    images = {}
    height = round(PRINTED_WIDTH * HEIGHT / WIDTH)

    def image(figure: Figure, key: str) -> str:
        images[key] = svg_to_image(figure.svg)
        return f'<img src="{key}" width="{PRINTED_WIDTH}" height="{height}">'

    text = render_html(report, image, printed=True)
    document = QTextDocument()
    for key, picture in images.items():
        document.addResource(QTextDocument.ResourceType.ImageResource, QUrl(key), picture)
    document.setHtml(text)
    document.setMetaInformation(QTextDocument.MetaInformation.DocumentTitle, report.title)
    target = Path(target)
    with atomic_path(target, keep_suffix=True) as tmp:
        writer = QPdfWriter(str(tmp))
        writer.setTitle(report.title)
        writer.setCreator("Scalewright")
        writer.setPageSize(QPageSize(QPageSize.PageSizeId.A4))
        writer.setPageMargins(QMarginsF(0, 0, 0, 0), QPageLayout.Unit.Millimeter)  # see above
        document.print_(writer)
        del writer  # the file is complete once the writer is gone
        if not tmp.stat().st_size:
            raise ScalewrightError(f"{target}: the PDF could not be written")
