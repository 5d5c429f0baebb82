"""Small pieces every dialog uses: text styles, inline messages and plain words.

Colour-blind-safe accents from the theme; the text always carries the meaning too, so
nothing depends on the colour alone.
"""

from __future__ import annotations

from typing import Any

from PySide6.QtCore import Qt
from PySide6.QtWidgets import QLabel, QSizePolicy

from ..tasks import KIND_WORDS
from . import theme

ERROR_STYLE = f"color: {theme.WARNING}; font-weight: 600;"
MUTED_STYLE = f"color: {theme.MUTED_TEXT};"
# A darker shade of the theme's bluish green, so the text reads well on the light window.
OK_STYLE = "color: #00795a; font-weight: 600;"


def kind_word(kind: Any) -> tuple[str, str]:
    """(short word, one-sentence explanation) for a column kind."""
    key = str(getattr(kind, "value", kind))
    words = KIND_WORDS.get(key)  # a kind or its plain value
    return (words.word, words.about) if words else (key, "")


def message_label(style: str = ERROR_STYLE, role: str = "warning") -> QLabel:
    """A hidden, wrapping, selectable label for a message under a control."""
    label = QLabel()
    label.setProperty("role", role)
    label.setSizePolicy(QSizePolicy.Policy.Preferred, QSizePolicy.Policy.Minimum)
    label.setWordWrap(True)
    label.setStyleSheet(style)
    label.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
    label.hide()
    return label


def set_message(label: QLabel, text: str) -> None:
    """Show ``text`` as an inline warning under a control, or hide the label when empty."""
    label.setText(f"⚠  {text}" if text else "")
    label.setToolTip(text)
    label.setVisible(bool(text))


def plural(n: int, word: str, words: str | None = None) -> str:
    """'1 column', '2,412 columns' (``words`` for an irregular plural)."""
    return f"{n:,} {word if n == 1 else (words or word + 's')}"


def escape_html(text: str) -> str:
    """Text safe to put inside a rich-text label."""
    return text.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
