"""The CLI commands, one module each, registered in one explicit list."""

from .assign import assign
from .compare import compare
from .demo import demo
from .plot import plot
from .recover import recover
from .render import render
from .report import report
from .section import section
from .verify import verify

COMMANDS = (section, assign, recover, render, plot, report, compare, verify, demo)
