"""The CLI commands, one module each, registered in one explicit list."""

from .section import section

COMMANDS = (section,)
