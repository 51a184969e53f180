"""What the panels and the report show, computed from an analysis (no widgets)."""
