"""Dock panels of the main window (one file per panel)."""
