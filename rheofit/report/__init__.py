"""Presentation: console tables (rich), figures (matplotlib) and the HTML report."""
