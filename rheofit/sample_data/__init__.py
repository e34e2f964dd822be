"""Invented sample sweeps bundled with rheofit (see README.md in this folder)."""
