"""Jinja2 templates, the pack stylesheet and bundled fonts (data only)."""
