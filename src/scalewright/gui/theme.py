"""A calm, readable look: one font size, consistent spacing, colour-blind-safe colours.

The colours come from the Okabe-Ito palette (Okabe and Ito, "Color Universal Design",
2008), chosen so that the original, scaled and highlight colours stay apart for the common
kinds of colour blindness. Highlights also change the outline, never only the colour.
"""

from __future__ import annotations

from PySide6.QtGui import QColor, QFont, QPalette
from PySide6.QtWidgets import QApplication

# Okabe-Ito
BLUE = "#0072B2"  # original units
ORANGE = "#E69F00"  # scaled units
VERMILLION = "#D55E00"  # warnings
BLUISH_GREEN = "#009E73"
REDDISH_PURPLE = "#CC79A7"
SKY_BLUE = "#56B4E9"
BLACK = "#000000"

ORIGINAL = BLUE
SCALED = ORANGE
HIGHLIGHT = REDDISH_PURPLE  # the hovered bar and its twin, with a dark outline
RANGE_FILL = (86, 180, 233, 50)  # sky blue, translucent: the selected range
WARNING = VERMILLION
MUTED_TEXT = "#6b6b6b"
BACKGROUND = "#fbfbfa"
TEXT = "#222222"

SPACING = 8  # between controls
MARGIN = 10  # around panels
FONT_POINT_SIZE = 10


def apply_theme(app: QApplication) -> None:
    """Fusion style with a light palette and a readable font, the same on every system."""
    app.setStyle("Fusion")
    font = QFont(app.font())
    font.setPointSize(FONT_POINT_SIZE)
    app.setFont(font)
    pal = QPalette()
    pal.setColor(QPalette.ColorRole.Window, QColor("#f3f3f1"))
    pal.setColor(QPalette.ColorRole.Base, QColor("#ffffff"))
    pal.setColor(QPalette.ColorRole.AlternateBase, QColor("#f6f6f4"))
    pal.setColor(QPalette.ColorRole.Text, QColor(TEXT))
    pal.setColor(QPalette.ColorRole.WindowText, QColor(TEXT))
    pal.setColor(QPalette.ColorRole.ButtonText, QColor(TEXT))
    pal.setColor(QPalette.ColorRole.Button, QColor("#ececea"))
    pal.setColor(QPalette.ColorRole.Highlight, QColor(BLUE))
    pal.setColor(QPalette.ColorRole.HighlightedText, QColor("#ffffff"))
    pal.setColor(QPalette.ColorRole.ToolTipBase, QColor("#ffffe8"))
    pal.setColor(QPalette.ColorRole.ToolTipText, QColor(TEXT))
    for role in (
        QPalette.ColorRole.Text,
        QPalette.ColorRole.WindowText,
        QPalette.ColorRole.ButtonText,
    ):
        pal.setColor(QPalette.ColorGroup.Disabled, role, QColor("#9a9a9a"))
    app.setPalette(pal)
    app.setStyleSheet(
        "QGroupBox { font-weight: bold; margin-top: 12px; padding-top: 6px; }"
        "QGroupBox::title { subcontrol-origin: margin; left: 6px; padding: 0 4px; }"
        f"QLabel[role='hint'] {{ color: {MUTED_TEXT}; }}"
        f"QLabel[role='warning'] {{ color: {WARNING}; }}"
        "QLabel[role='heading'] { font-size: 12pt; font-weight: bold; }"
    )


def configure_plots() -> None:
    """pyqtgraph defaults: white background, dark axes, smooth lines."""
    import pyqtgraph as pg

    pg.setConfigOptions(background="w", foreground="#444444", antialias=True)
