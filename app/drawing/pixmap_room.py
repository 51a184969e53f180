"""Room in Qt's one pixmap cache (``QPixmapCache``) for the items that keep a pixmap of their
drawing (``QGraphicsItem.DeviceCoordinateCache``): the canvas items, the plots' axes, the Tune
sweep's curves.

Qt keeps 10 MB by default and throws the least recently used pixmaps out past it. An item whose
pixmap was thrown out draws itself and fills a new pixmap on its next paint, which is slower than
keeping no pixmap at all: when the pixmaps a repaint needs do not all fit, every repaint thrashes.
So each user reserves the room its own pixmaps take (a number of viewports' worth of pixels,
kept current as its viewport is resized: :class:`ViewportRoom`), and the limit is Qt's default
(for everything else: axes, icons, styles) plus the sum of the reservations.
"""

from __future__ import annotations

from PySide6.QtCore import QEvent, QObject
from PySide6.QtGui import QPixmapCache

#: Qt's own default limit (KB), kept for the pixmaps no one reserves.
BASE_KB = 10240
_RESERVED: dict[str, int] = {}


def reserve(owner: str, kb: int) -> int:
    """Reserve ``kb`` KB of the pixmap cache for ``owner`` (replacing its earlier reservation);
    returns the cache's limit now. The limit only grows: pixmaps already in use keep their room."""
    _RESERVED[owner] = max(0, int(kb))
    want = BASE_KB + sum(_RESERVED.values())
    if QPixmapCache.cacheLimit() < want:
        QPixmapCache.setCacheLimit(want)
    return QPixmapCache.cacheLimit()


def viewport_kb(widget, viewports: float) -> int:
    """KB of ``viewports`` pixmaps the size of ``widget`` on its screen (device pixels, 4 bytes
    each)."""
    ratio = widget.devicePixelRatioF()
    return int(viewports * widget.width() * widget.height() * ratio * ratio * 4 / 1024)


class ViewportRoom(QObject):
    """Keeps ``owner``'s reservation at ``viewports()`` pixmaps the size of ``viewport`` (an
    event filter on it: a resize reserves again)."""

    def __init__(self, owner: str, viewport, viewports):
        super().__init__(viewport)
        self._owner = owner
        self._viewport = viewport
        self._viewports = viewports if callable(viewports) else (lambda n=viewports: n)
        viewport.installEventFilter(self)
        self.update()

    def update(self) -> int:
        """Reserve for the viewport's size and pixmap count now; returns the cache's limit."""
        return reserve(self._owner, viewport_kb(self._viewport, self._viewports()))

    def eventFilter(self, obj, event):  # noqa: N802 (Qt's name)
        if obj is self._viewport and event.type() == QEvent.Type.Resize:
            self.update()
        return False
