"""Files in and out: snapshots (JSON), data import, SBML export, static reports."""
