"""Shared drawing: the model sketch, element shapes, colours and plot axes."""
