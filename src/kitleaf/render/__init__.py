"""Rendering: schematics (schemdraw), response plots (matplotlib), prose and HTML pages."""
