"""``python -m calcsheet`` runs the command line, as the installed ``calcsheet`` script does."""

from calcsheet.cli import main

main(prog_name="calcsheet")
