"""``python -m ratebank`` runs the command line."""

from ratebank.cli.app import main

main()
