"""Files in and out: snapshots (JSON), data import, SBML export, static reports."""

from .data import DataError, load_data, parse_data

__all__ = ["DataError", "load_data", "parse_data"]
