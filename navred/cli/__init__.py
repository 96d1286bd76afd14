"""The command line (typer): the only part of navred that prints. `app` is the typer application
(defined in `navred.cli.app`) and `main` the entry point of the ``navred`` console script and of
``python -m navred``. The rule: nothing in navred imports the command line except ``navred.__main__``;
it parses options, calls io/, jobs/ and the core, and prints their results, errors and warnings."""

from .app import app, main

__all__ = ["app", "main"]
