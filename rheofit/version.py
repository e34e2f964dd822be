"""The package version (one place; pyproject reads the same number)."""

VERSION = "0.1.0"
