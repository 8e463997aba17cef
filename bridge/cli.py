"""The ``plybridge`` command line.

Every command reads its inputs, writes its outputs atomically and keeps stdout
machine-readable (progress and notes go to stderr). Bad input ends with one
line on stderr and exit code 2, never a traceback.
"""

from __future__ import annotations

import sys
import warnings

import click

from shells.defaults import CAUTION
from shells.errors import InputError, printable


class _Group(click.Group):
    """A click group that turns bad input into one line on stderr and exit code 2."""

    def main(self, args=None, prog_name=None, **extra):  # noqa: D401 - click signature
        from bridge.guards import fault_error

        try:
            with warnings.catch_warnings(record=True) as caught:
                warnings.simplefilter("always", RuntimeWarning)
                rv = super().main(args=args, prog_name=prog_name or "plybridge", standalone_mode=False, **extra)
            _numeric_warning(caught)
        except InputError as err:
            _fail(str(err))
        except click.exceptions.Exit as err:
            sys.exit(err.exit_code)
        except click.Abort:
            _fail("aborted", 130)
        except click.ClickException as err:
            _fail(err.format_message())
        except (OSError, RuntimeError) as err:
            fault = fault_error(err)
            if fault is None and not isinstance(err, OSError):
                raise
            _fail(str(fault) if fault is not None else f"{err.filename or 'a file'}: {err.strerror or err}; "
                  "check the path and the disk")
        sys.exit(rv if isinstance(rv, int) else 0)


def _numeric_warning(caught) -> None:
    """One stderr line for numpy's RuntimeWarnings of a run that finished (never one line per warning)."""
    numeric = [w for w in caught if issubclass(w.category, RuntimeWarning)]
    for w in caught:
        if w not in numeric:
            warnings.showwarning(w.message, w.category, w.filename, w.lineno)
    if numeric:
        click.echo(f"plybridge: warning: {len(numeric)} floating-point warning(s) (e.g. "
                   f"{printable(str(numeric[0].message))}); check the inputs for extreme values", err=True)


def safe_lines(text: str) -> str:
    """Machine-readable stdout made terminal-safe: every field of every line escaped, tabs and line breaks kept."""
    return "".join("\t".join(printable(f) for f in line.split("\t")) + "\n" for line in text.splitlines())


def _fail(message: str, code: int = 2) -> None:
    click.echo(f"plybridge: error: {printable(' '.join(message.split()))}", err=True)
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
