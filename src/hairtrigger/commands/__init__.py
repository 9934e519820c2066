"""Sub-commands of the ``hairtrigger`` command line (one module each; see `hairtrigger.cli`)."""


class UserError(Exception):
    """A problem with the user's input, reported as one line without a traceback."""
