"""The CLI commands, one module each, registered in one explicit list."""

from .assign import assign
from .recover import recover
from .section import section

COMMANDS = (section, assign, recover)
