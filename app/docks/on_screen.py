"""Whether a panel is on screen, for panels that defer their work while they are not.

Qt keeps the dock widgets of a tab group *visible* when their tab is not the current one (it
moves them out of the window), so ``isVisible()`` says nothing about a hidden tab: the visible
region does. A panel behind another tab updates nothing on an edit and catches up when its tab
is shown (the main window connects each dock's ``visibilityChanged`` to the panel's
``catch_up``).
"""

from __future__ import annotations


def on_screen(widget) -> bool:
    """Visible and not clipped away entirely (a dock tab behind another is clipped away)."""
    return widget.isVisible() and not widget.visibleRegion().isEmpty()


def behind_tab(widget) -> bool:
    """In a shown window but not on screen (a dock tab behind another, a closed dock). A panel
    that was never put in a shown window is not behind a tab: it works as soon as asked."""
    win = widget.window()
    return win is not widget and win.isVisible() and not on_screen(widget)


__all__ = ["on_screen", "behind_tab"]
