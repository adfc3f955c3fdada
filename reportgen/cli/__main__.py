"""``python -m reportgen.cli``: the command line."""

from reportgen.cli import run

run()
