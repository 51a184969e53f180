"""The Qt binding must not leak or steal references (a binding defect once aborted long paints)."""

import sys

from PySide6.QtCore import QObject
from PySide6.QtGui import QPainterPath


def test_void_methods_keep_none_refcount():
    """Common practice: a void method returns a new reference to None. PySide6 6.12.0 on CPython
    3.11 did not, lowering None's count once per call until the interpreter aborted; the project
    pins that version out. Checked on the calls that first showed it."""
    path = QPainterPath()
    obj = QObject()
    before = sys.getrefcount(None)
    for i in range(2000):
        path.lineTo(i, i)
        obj.setObjectName("probe")
    assert abs(sys.getrefcount(None) - before) < 100
