"""Shared text: units and the one number format used by every panel, the report, CSV and CLI."""
