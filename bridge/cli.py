"""The ``plybridge`` command line.

Every command reads its inputs, writes its outputs atomically and keeps stdout
machine-readable (progress and notes go to stderr). Bad input ends with one
line on stderr and exit code 2, never a traceback.
"""

from __future__ import annotations

import sys

import click

from shells.defaults import CAUTION
from shells.errors import InputError


class _Group(click.Group):
    """A click group that turns bad input into one line on stderr and exit code 2."""

    def main(self, args=None, prog_name=None, **extra):  # noqa: D401 - click signature
        try:
            rv = super().main(args=args, prog_name=prog_name or "plybridge", standalone_mode=False, **extra)
        except InputError as err:
            _fail(str(err))
        except click.exceptions.Exit as err:
            sys.exit(err.exit_code)
        except click.Abort:
            _fail("aborted", 130)
        except click.ClickException as err:
            _fail(err.format_message().replace("\n", " "))
        except (FileNotFoundError, IsADirectoryError, PermissionError) as err:
            _fail(f"{err.filename}: {err.strerror}")
        sys.exit(rv if isinstance(rv, int) else 0)


def _fail(message: str, code: int = 2) -> None:
    click.echo(f"plybridge: error: {' '.join(message.split())}", err=True)
    sys.exit(code)


@click.group(cls=_Group, help=f"Composite shell sections in, ply margins out.\n\n{CAUTION}")
@click.version_option(package_name="plybridge")
def main() -> None:
    pass


def _register() -> None:
    from bridge.commands import COMMANDS

    for command in COMMANDS:
        main.add_command(command)


_register()


if __name__ == "__main__":
    main()
