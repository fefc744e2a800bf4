"""``python -m glint``: the same command line as the ``glint`` script."""

from glint.cli.main import cli

if __name__ == "__main__":
    cli()
