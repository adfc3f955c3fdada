"""``python -m reportgen``: the command line."""

from reportgen.cli import run

run()
