"""``python -m figspec`` runs the command line."""

from figspec.cli import main

main()
