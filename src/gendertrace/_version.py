"""The package version: bumped whenever scoring changes (rules, weights or code), so that runs compare fairly."""

__version__ = "0.2.2"
