"""The PNG report, rendered with no window (one module per section)."""

from app.report.page import CAUTIONS, MAX_REPORTED_MODES
from app.report.render import render_report

__all__ = ["render_report", "CAUTIONS", "MAX_REPORTED_MODES"]
