import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from PySide6.QtGui import QImage

import solver
from app.report import CAUTIONS, render_report

from _models_for_views import chain, td3s


def test_report_is_a4_at_200_dpi_with_its_modes(tmp_path):
    """common practice: A4 portrait (210 x 297 mm) at 200 dpi is 1654 x 2339 px; every mode of a
    small model is reported."""
    model = td3s()
    out = tmp_path / "r.png"
    info = render_report(model, solver.analyse(model), out, dpi=200)
    img = QImage(str(out))
    assert not img.isNull()
    assert (img.width(), img.height()) == (info["width"], info["height"]) == (1654, 2339)
    assert info["modes_shown"] == 2 and info["modes_left_out"] == 0


def test_report_caps_thumbnails_and_says_how_many_are_left_out(tmp_path):
    """common practice: a long chain reports the lowest 12 modes and counts the rest."""
    model = chain(20)
    info = render_report(model, None, tmp_path / "chain.png", dpi=100)
    assert info["modes_shown"] == 12
    assert info["modes_total"] == 20 and info["modes_left_out"] == 8
    img = QImage(str(tmp_path / "chain.png"))
    assert img.width() == round(210 / 25.4 * 100) and img.height() >= round(297 / 25.4 * 100)


def test_report_page_is_not_blank_and_carries_the_caution():
    """DESIGN.md section 7: the report states the lumped-model caution and that codes govern."""
    text = " ".join(CAUTIONS)
    assert "approximation" in text and "test or by detailed analysis" in text
    assert "local codes" in text and "licensed engineering practice govern" in text


def test_report_draws_ink(tmp_path):
    """common practice: a rendered page has ink on it (not a white image)."""
    out = tmp_path / "r.png"
    render_report(td3s(), None, out, dpi=72)
    img = QImage(str(out))
    dark = sum(1 for y in range(0, img.height(), 7) for x in range(0, img.width(), 7)
               if img.pixelColor(x, y).lightness() < 128)
    assert dark > 50
