"""Two linked histograms: the selected column in original units and scaled.

The counts and the edges come from the session (which takes them from the engine); the
scaled side draws the same counts on the original edges mapped through the fitted
transform, so bar i on one side holds exactly the values of bar i on the other. pyqtgraph
only draws. Hovering a bar highlights its twin; a range dragged on either side is shown
on the other, with the count and the bounds in both units.
"""

from __future__ import annotations

import math

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QPointF, Qt, QTimer
from PySide6.QtWidgets import (
    QGraphicsItem,
    QGridLayout,
    QHBoxLayout,
    QLabel,
    QPushButton,
    QVBoxLayout,
    QWidget,
)

from ..engine import get_method
from ..engine.histogram import COUNT_PER_UNIT, bar_heights
from ..engine.number_text import number_text
from ..session import Figures, RangeInfo, Session
from . import theme


def fmt(v: float) -> str:
    """A number short enough to read at a glance (4 significant digits)."""
    if v is None or (isinstance(v, float) and math.isnan(v)):
        return "–"
    if isinstance(v, float) and math.isinf(v):
        return "∞" if v > 0 else "-∞"
    v = float(v)
    if v == 0:
        return "0"
    if abs(v) < 1e-12:  # rounding noise around zero, e.g. the mean of z-scores
        return "0"
    text = number_text(v, ".4g")
    if "e" not in text and abs(v) >= 1000:
        text = number_text(v, ",.0f")
    return text  # the ASCII minus, as everywhere (number_text)


FIGURE_LINES = 4


def figures_text(f: Figures | None) -> str:
    """Four short lines, so that the figures fit under a half-width plot without breaking
    (a wrapped line would make one plot shorter than the other)."""
    if f is None:
        return ""
    return (
        f"n {f.n:,}    missing {f.missing:,}\n"
        f"mean {fmt(f.mean)}    sd {fmt(f.sd)}\n"
        f"min {fmt(f.min)}    max {fmt(f.max)}\n"
        f"skewness {fmt(f.skewness)}"
    )


class _Side:
    """One plot with its bars, hover highlight and range region."""

    def __init__(self, title: str, colour: str) -> None:
        self.widget = pg.PlotWidget()
        self.widget.setMinimumHeight(160)
        self.plot = self.widget.getPlotItem()
        self.plot.setMenuEnabled(False)
        self.plot.hideButtons()
        self.plot.setMouseEnabled(x=False, y=False)
        self.plot.showGrid(x=False, y=True, alpha=0.15)
        self.plot.setLabel("left", "count")
        self._left_title = "count"
        # Axes are drawn from a pixmap while their range and labels stay the same: a
        # method switch leaves three of the four axes as they were, and replaying their
        # recorded drawing took longer than the rest of the plot.
        for name in ("left", "bottom"):
            self.plot.getAxis(name).setCacheMode(QGraphicsItem.CacheMode.DeviceCoordinateCache)
        self.title = title
        self.colour = colour
        self.bars = pg.BarGraphItem(
            x0=[0], x1=[1], height=[0], brush=colour, pen=pg.mkPen("w", width=0.5)
        )
        self.plot.addItem(self.bars)
        self.hover = pg.BarGraphItem(
            x0=[0], x1=[1], height=[0], brush=theme.HIGHLIGHT, pen=pg.mkPen(theme.BLACK, width=2)
        )
        self.hover.setVisible(False)
        self.hover.setZValue(5)
        self.plot.addItem(self.hover)
        self.region = pg.LinearRegionItem(
            brush=pg.mkBrush(*theme.RANGE_FILL),
            pen=pg.mkPen(theme.SKY_BLUE, width=2),
            hoverBrush=pg.mkBrush(*theme.RANGE_FILL[:3], 80),
        )
        self.region.setZValue(10)
        self.region.setVisible(False)
        self.plot.addItem(self.region)
        self.x0 = np.zeros(0)
        self.x1 = np.zeros(0)
        self.counts = np.zeros(0)
        self.heights = self.counts  # as drawn: the counts, or counts per unit of width
        self.valid = np.zeros(0, dtype=bool)
        self.figures = QLabel("")
        self.figures.setProperty("role", "hint")
        self.figures.setWordWrap(True)
        # Always as high as the figures ("…", a message, or the figures), so that a method
        # switch never changes the height of the plots above (which would repaint their axes).
        lines = FIGURE_LINES * self.figures.fontMetrics().lineSpacing()
        self.figures.setMinimumHeight(lines + 2)
        self._axis_title = ""
        self.figures.setToolTip(
            f"Summary of the column in {title.lower()}: how many values, how many blanks, "
            "mean, standard deviation, smallest, largest and skewness (0 = symmetric)"
        )

    def set_axis_title(self, text: str) -> None:
        """The label under the x axis (set only when it changes: setting it lays out anew)."""
        if text != self._axis_title:
            self._axis_title = text
            self.plot.setLabel("bottom", text)

    def set_bars(self, edges: np.ndarray, counts: np.ndarray) -> None:
        x0, x1 = edges[:-1], edges[1:]
        valid = np.isfinite(x0) & np.isfinite(x1)
        self.x0, self.x1, self.counts, self.valid = x0, x1, counts, valid
        self.heights, per_unit = bar_heights(edges, counts, valid)
        left = COUNT_PER_UNIT if per_unit else "count"
        if left != self._left_title:  # set only when it changes: setting it lays out anew
            self._left_title = left
            self.plot.setLabel("left", left)
        if valid.any():
            self.bars.setOpts(x0=x0[valid], x1=x1[valid], height=self.heights[valid])
            self.bars.setVisible(True)
            self.plot.enableAutoRange()
        else:
            self.bars.setVisible(False)
        self.hover.setVisible(False)

    def bar_at(self, x: float) -> int | None:
        """The bar under x (on this side's axis), or None."""
        if not self.valid.any():
            return None
        for i in np.flatnonzero(self.valid):
            if self.x0[i] <= x <= self.x1[i]:
                return int(i)
        return None

    def show_hover(self, i: int | None) -> None:
        if i is None or not (0 <= i < len(self.valid)) or not self.valid[i]:
            self.hover.setVisible(False)
            return
        self.hover.setOpts(x0=[self.x0[i]], x1=[self.x1[i]], height=[self.heights[i]])
        self.hover.setVisible(True)

    def hovered_bar(self) -> tuple[float, float, float] | None:
        """(x0, x1, height) of the highlighted bar, as drawn, or None."""
        if not self.hover.isVisible():
            return None
        o = self.hover.opts
        return float(o["x0"][0]), float(o["x1"][0]), float(o["height"][0])


class HistogramPanel(QWidget):
    def __init__(self, session: Session, parent: QWidget | None = None) -> None:
        super().__init__(parent)
        self.session = session
        self.label: str | None = None
        self.hovered: int | None = None
        self.range: RangeInfo | None = None
        self.redraws = 0

        self.original = _Side("Original units", theme.ORIGINAL)
        self.scaled = _Side("Scaled", theme.SCALED)

        layout = QVBoxLayout(self)
        layout.setContentsMargins(theme.MARGIN, theme.MARGIN, theme.MARGIN, theme.MARGIN)
        layout.setSpacing(theme.SPACING // 2)
        top = QHBoxLayout()
        self.heading = QLabel("Select a column to see its values")
        self.heading.setProperty("role", "heading")
        top.addWidget(self.heading, 1)
        self.range_button = QPushButton("Select a range")
        self.range_button.setCheckable(True)
        self.range_button.setToolTip(
            "Show a range you can drag on either histogram; the same values are marked on "
            "the other side, with their count and bounds in both units"
        )
        self.range_button.toggled.connect(self.show_range)
        top.addWidget(self.range_button)
        layout.addLayout(top)

        grid = QGridLayout()
        grid.setHorizontalSpacing(theme.SPACING * 2)
        grid.setVerticalSpacing(2)
        self.original_title = QLabel()
        self.scaled_title = QLabel()
        for col, (side, title) in enumerate(
            ((self.original, self.original_title), (self.scaled, self.scaled_title))
        ):
            # One line: a title that wrapped on one method and not on another would move
            # the plots below it.
            title.setWordWrap(False)
            grid.addWidget(title, 0, col)
            grid.addWidget(side.widget, 1, col)
            grid.addWidget(side.figures, 2, col)
            grid.setColumnStretch(col, 1)
        self.original.widget.setToolTip(
            "The column's values in its own units. Hover a bar to see it on the scaled side"
        )
        self.scaled.widget.setToolTip(
            "The same values after scaling: bar for bar the same counts, on scaled edges"
        )
        layout.addLayout(grid, 1)
        self.info = QLabel(" ")
        self.info.setWordWrap(True)
        self.info.setToolTip("The hovered bar or the selected range, in both units")
        self.info.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        layout.addWidget(self.info)
        self.note = QLabel("")
        self.note.setProperty("role", "hint")
        self.note.setWordWrap(True)
        layout.addWidget(self.note)

        self.original.region.sigRegionChanged.connect(lambda: self._on_region(scaled=False))
        self.scaled.region.sigRegionChanged.connect(lambda: self._on_region(scaled=True))
        self.original.widget.scene().sigMouseMoved.connect(
            lambda pos: self._on_mouse(self.original, pos)
        )
        self.scaled.widget.scene().sigMouseMoved.connect(
            lambda pos: self._on_mouse(self.scaled, pos)
        )

        session.table_loaded.connect(lambda: self.show_column(session.current, force=True))
        session.selection_changed.connect(lambda _labels: self.show_column(session.current))
        session.fitted.connect(self._on_fitted)
        session.scaled_figures_ready.connect(self._on_figures_ready)
        session.settings_changed.connect(lambda: self.show_column(session.current, force=True))
        self._figures_timer = QTimer(self)
        self._figures_timer.setSingleShot(True)
        self._figures_timer.timeout.connect(self._update_scaled_figures)
        self.show_column(session.current, force=True)

    # ------------------------------------------------------------------ drawing

    def show_column(self, label: str | None, force: bool = False) -> None:
        s = self.session
        if label is not None and not s.scalable(label) and s.kind(label) != "number":
            label = None
        if label == self.label and not force:
            return
        self.label = label
        self.hovered = None
        if label is None:
            self.heading.setText(
                "Select a column to see its values" if s.table is not None else "Open data to begin"
            )
            for side in (self.original, self.scaled):
                side.set_bars(np.array([0.0, 1.0]), np.zeros(1))
                side.figures.setText("")
                side.region.setVisible(False)
            self.original_title.setText("")
            self.scaled_title.setText("")
            self.info.setText(" ")
            self.note.setText("")
            return
        n_sel = len(s.selection)
        extra = f"  (first of {n_sel} selected)" if n_sel > 1 else ""
        if s.sample is not None:  # said where the user looks: figures come from a sample
            extra += f"  (a sample of {s.sample.rows:,} rows of {s.sample.total_rows:,})"
        self.heading.setText(s.header(label) + extra)
        h = s.histogram(label)
        self.original.set_bars(h.edges, h.counts)
        self.original_title.setText(f"<b style='color:{theme.ORIGINAL}'>\u25a0</b> Original units")
        self.original.figures.setText(figures_text(s.figures(label)))
        self.original.set_axis_title(s.header(label))
        # No readout of another column's bar or range survives the switch.
        self.range = None
        self.info.setText(" ")
        self._draw_scaled()
        if self.range_button.isChecked():
            self._reset_range()

    def _on_fitted(self, label: str) -> None:
        if label == self.label:
            self._draw_scaled()

    def _draw_scaled(self) -> None:
        """Redraw the scaled side: map the edges, reuse the counts (no values touched)."""
        s = self.session
        label = self.label
        if label is None:
            return
        self.redraws += 1
        h = s.histogram(label)
        method = get_method(s.choice(label).method)
        error = s.fit_error(label)
        edges = s.scaled_edges(label)
        self.scaled.set_bars(edges, h.counts)
        if s.fitting(label):
            # A slow fit of a large column is on its way; the bars follow when it lands.
            self.scaled_title.setText(
                f"<b style='color:{theme.SCALED}'>\u25a0</b> Scaled with {method.name}: fitting…"
            )
            self.scaled.figures.setText("")
        elif error:
            self.scaled_title.setText(
                f"<b style='color:{theme.SCALED}'>\u25a0</b> Scaled: "
                f"<span style='color:{theme.WARNING}'>cannot be fitted</span>"
            )
            self.scaled.figures.setText(
                f"{method.name} cannot be used on this column; the method panel says why."
            )
        else:
            how = f" with {method.name}" if method.id != "none" else ": left as it is for now"
            self.scaled_title.setText(f"<b style='color:{theme.SCALED}'>\u25a0</b> Scaled{how}")
            self.scaled.figures.setText("…")
            self._figures_timer.start(0)  # figures follow right after the bars are drawn
        self.scaled.set_axis_title(f"{s.header(label)}, scaled")
        fc = s.fitted_column(label)
        if s.sample is not None:
            self.note.setText(s.sample.describe() + ".")
        elif fc is not None and fc.groups:
            self.note.setText(
                f"Fitted separately for each group of '{s.settings.group_by}'. The scaled "
                "histogram uses the values fitted on all rows, so it is a guide only."
            )
        elif s.settings.fit_where is not None:
            col, val = s.settings.fit_where
            self.note.setText(f"Fitted on the rows where {col} is {val}; shown for every row.")
        else:
            self.note.setText("")
        if self.hovered is not None:
            self.hover_bar(self.hovered)
        if self.range is not None and self.range_button.isChecked():
            self.set_range(self.range.low, self.range.high)

    def _on_figures_ready(self, label: str) -> None:
        if label == self.label:
            self._update_scaled_figures()

    def _update_scaled_figures(self) -> None:
        s = self.session
        label = self.label
        if label is None or s.fitting(label) or s.fit_error(label):
            return
        if s.scaled_figures_waiting(label):
            return  # "…" stays until they land (_on_figures_ready)
        self.scaled.figures.setText(figures_text(s.scaled_figures(label)))

    # ------------------------------------------------------------------ hover

    def _on_mouse(self, side: _Side, scene_pos: QPointF) -> None:
        vb = side.plot.getViewBox()
        if self.label is None or not vb.sceneBoundingRect().contains(scene_pos):
            self.hover_bar(None)
            return
        x = vb.mapSceneToView(scene_pos).x()
        self.hover_bar(side.bar_at(x))

    def hover_bar(self, i: int | None) -> str:
        """Highlight bar i on both sides and describe it in both units."""
        self.hovered = i
        self.original.show_hover(i)
        self.scaled.show_hover(i)
        if i is None or self.label is None:
            self.info.setText(" " if self.range is None else self.range_text(self.range))
            return ""
        s = self.session
        h = s.histogram(self.label)
        scaled = s.scaled_edges(self.label)
        text = (
            f"<b>Bar {i + 1} of {len(h.counts)}</b>: {int(h.counts[i]):,} values. "
            f"<span style='color:{theme.ORIGINAL}'>Original</span> {fmt(h.edges[i])} to "
            f"{fmt(h.edges[i + 1])}; "
            f"<span style='color:#b07800'>scaled</span> {fmt(scaled[i])} to {fmt(scaled[i + 1])}"
        )
        self.info.setText(
            text if self.range is None else text + "<br>" + self.range_text(self.range)
        )
        return text

    # ------------------------------------------------------------------ range

    def show_range(self, on: bool) -> None:
        if self.range_button.isChecked() != on:
            self.range_button.setChecked(on)  # calls back here
            return
        for side in (self.original, self.scaled):
            side.region.setVisible(on and self.label is not None)
        if on:
            self._reset_range()
        else:
            self.range = None
            self.hover_bar(self.hovered)

    def _reset_range(self) -> None:
        if self.label is None:
            return
        s = self.session.figures(self.label)
        span = s.max - s.min
        self.set_range(s.min + span / 3, s.min + 2 * span / 3)
        for side in (self.original, self.scaled):
            side.region.setVisible(True)

    def set_range(self, low: float, high: float, *, scaled: bool = False) -> RangeInfo | None:
        """Select the values between low and high (given in original or scaled units)."""
        if self.label is None:
            return None
        if not self.range_button.isChecked():
            self.range_button.blockSignals(True)
            self.range_button.setChecked(True)
            self.range_button.blockSignals(False)
            for side in (self.original, self.scaled):
                side.region.setVisible(True)
        side = self.scaled if scaled else self.original
        side.region.blockSignals(True)
        side.region.setRegion((low, high))
        side.region.blockSignals(False)
        return self._on_region(scaled=scaled)

    def _on_region(self, *, scaled: bool) -> RangeInfo | None:
        if self.label is None:
            return None
        side, other = (self.scaled, self.original) if scaled else (self.original, self.scaled)
        low, high = side.region.getRegion()
        info = self.session.range_info(self.label, low, high, scaled=scaled)
        other_bounds = (info.low, info.high) if scaled else (info.scaled_low, info.scaled_high)
        other.region.blockSignals(True)
        if all(math.isfinite(b) for b in other_bounds):
            other.region.setRegion(other_bounds)
            other.region.setVisible(True)
        else:
            other.region.setVisible(False)
        other.region.blockSignals(False)
        self.range = info
        if self.hovered is not None:
            self.hover_bar(self.hovered)
        else:
            self.info.setText(self.range_text(info))
        return info

    def range_text(self, info: RangeInfo) -> str:
        n = self.session.figures(self.label).n if self.label else 0
        share = f" ({info.count / n:.0%} of the values)" if n else ""
        return (
            f"<b>Selected range</b>: {info.count:,} values{share}. "
            f"<span style='color:{theme.ORIGINAL}'>Original</span> {fmt(info.low)} to "
            f"{fmt(info.high)}; <span style='color:#b07800'>scaled</span> "
            f"{fmt(info.scaled_low)} to {fmt(info.scaled_high)}"
        )
