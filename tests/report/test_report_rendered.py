"""The report as people see it: the HTML in a real browser (Debian's headless Chromium) and
the PDF turned into page images by poppler's pdftoppm; both must show the tables and the
histograms. The pictures are read with Qt's QImage (pixels counted, not compared)."""

from __future__ import annotations

import re
import subprocess
from pathlib import Path

import numpy as np
import pytest

from scalewright.report import write_report
from scalewright.report.svg import HEIGHT, ORIGINAL, SCALED, WIDTH


def pixels(png: Path) -> np.ndarray:
    """The picture as an (height, width, 3) array of RGB values."""
    from PySide6.QtGui import QImage

    image = QImage(str(png)).convertToFormat(QImage.Format.Format_RGB888)
    assert not image.isNull(), png
    w, h, stride = image.width(), image.height(), image.bytesPerLine()
    raw = np.frombuffer(image.constBits(), dtype=np.uint8, count=stride * h)
    return raw.reshape(h, stride)[:, : w * 3].reshape(h, w, 3).astype(int)


def near(rgb: np.ndarray, colour: str, tolerance: int = 16) -> np.ndarray:
    """Mask of the pixels within ``tolerance`` of the ``#rrggbb`` colour."""
    target = np.array([int(colour[i : i + 2], 16) for i in (1, 3, 5)])
    return np.all(np.abs(rgb - target) <= tolerance, axis=-1)


def ink(rgb: np.ndarray) -> float:
    """Share of the picture that is not white."""
    return float(np.mean(np.any(rgb < 235, axis=-1)))


def screenshot(page: Path, png: Path, profile: Path) -> None:
    result = subprocess.run(
        [
            "chromium",
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--hide-scrollbars",
            f"--user-data-dir={profile}",
            f"--screenshot={png}",
            "--window-size=1200,3000",
            page.as_uri(),
        ],
        capture_output=True,
        text=True,
        timeout=300,
        check=False,
    )
    assert png.is_file(), result.stderr[-2000:]


def test_html_report_in_headless_chromium(every_method, tmp_path):
    path, _data, _project = every_method
    page = tmp_path / "harvest_report.html"
    write_report(_project, page, project_path=path)
    png = tmp_path / "report.png"
    screenshot(page, png, tmp_path / "profile")
    rgb = pixels(png)
    assert rgb.shape == (3000, 1200, 3)
    assert ink(rgb) > 0.03  # text and tables, not a blank page
    # the tables: their header cells are shaded
    assert near(rgb, "#f0f0ee", 2).sum() > 5_000
    # the first columns' histograms: blue bars on the left, orange bars on the right
    blue, orange = near(rgb, ORIGINAL), near(rgb, SCALED)
    assert blue.sum() > 10_000 and orange.sum() > 10_000
    blue_x = np.flatnonzero(blue.any(axis=0))  # the columns of pixels they appear in
    orange_x = np.flatnonzero(orange.any(axis=0))
    assert np.median(np.nonzero(blue)[1]) < np.median(np.nonzero(orange)[1])
    assert blue_x.min() < orange_x.min() and blue_x.max() < orange_x.max()


def test_without_data_the_browser_shows_no_bars_and_says_why(every_method, tmp_path):
    # the same check on a report without figures: it must tell the two apart
    path, data, project = every_method
    data.unlink()
    page = tmp_path / "no_figures.html"
    write_report(project, page, project_path=path)
    png = tmp_path / "no_figures.png"
    screenshot(page, png, tmp_path / "profile")
    rgb = pixels(png)
    assert ink(rgb) > 0.03
    assert near(rgb, ORIGINAL).sum() < 100 and near(rgb, SCALED).sum() < 100
    assert near(rgb, "#a04000", 40).sum() > 500  # the reason, in the warning colour


def test_pdf_report_pages(every_method, tmp_path, qapp):
    path, _data, project = every_method
    pdf = tmp_path / "harvest_report.pdf"
    report = write_report(project, pdf, project_path=path)
    assert pdf.read_bytes().startswith(b"%PDF-")
    subprocess.run(
        ["pdftoppm", "-r", "50", "-png", str(pdf), str(tmp_path / "page")],
        check=True,
        timeout=300,
    )
    pages = sorted(tmp_path.glob("page-*.png"))
    # a first page, then every column starts on a page of its own
    assert len(pages) >= 1 + len(report.columns)
    pictures = [pixels(p) for p in pages]
    assert ink(pictures[0]) > 0.05  # the facts, cautions and the table of columns
    assert all(ink(rgb) > 0.001 for rgb in pictures)  # no blank page
    with_both = [
        rgb for rgb in pictures if near(rgb, ORIGINAL).sum() > 500 and near(rgb, SCALED).sum() > 500
    ]
    assert len(with_both) >= len(report.columns)
    # every histogram is an image of the PDF (poppler's pdfimages lists them)
    listed = subprocess.run(
        ["pdfimages", "-list", str(pdf)], capture_output=True, text=True, check=True
    ).stdout.splitlines()[2:]
    sizes = [(int(line.split()[3]), int(line.split()[4])) for line in listed]
    assert len(sizes) == 2 * len(report.columns)
    assert all(w / h == pytest.approx(WIDTH / HEIGHT, rel=0.01) for w, h in sizes)
    text = subprocess.run(
        ["pdftotext", "-layout", str(pdf), "-"], capture_output=True, text=True, check=True
    ).stdout
    for section in report.columns:
        assert section.header in text
        for row in section.parameters:
            if re.fullmatch(r"-?[0-9.e+-]+", row.exact):
                assert row.exact in text, (section.label, row.name)
