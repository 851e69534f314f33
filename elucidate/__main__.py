"""``python -m elucidate`` runs the CLI."""

from elucidate.cli import main

main()
