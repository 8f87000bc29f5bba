"""Imported first by the fork server of the local workers: Ctrl-C is the parent's to handle.

The fork server and every worker forked from it ignore SIGINT from the moment
this is imported (the fork server imports the check before it sets this
itself), so a Ctrl-C at the terminal stops the campaign in one place, with
one message and no traceback from a helper process.
"""

import signal

__all__: list[str] = []

signal.signal(signal.SIGINT, signal.SIG_IGN)
