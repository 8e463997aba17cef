"""The CLI commands, one module each, registered in one explicit list."""

from bridge.commands.assign import assign
from bridge.commands.compare import compare
from bridge.commands.demo import demo
from bridge.commands.plot import plot
from bridge.commands.recover import recover
from bridge.commands.render import render
from bridge.commands.report import report
from bridge.commands.section import section
from bridge.commands.verify import verify

COMMANDS = (section, assign, recover, render, plot, report, compare, verify, demo)
