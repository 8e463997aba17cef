"""Fuzzing the stacking parser and the definition loader: bad input only ever raises InputError kinds.

Any other exception (TypeError, KeyError, RecursionError, MemoryError, …) or a
run longer than the deadline is a bug. Kept under a minute in CI.
"""

from __future__ import annotations

import copy
import tomllib

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from bridge.definition.loader import parse_definition
from shells.errors import DefinitionError, InputError, LayupError
from shells.stacking import parse_layup
from tests.corpus.models import DEFINITION

BASE = tomllib.loads(DEFINITION)

#: Inputs the fuzzer once broke the loader with (now fixed); kept as regression cases in test_former_bug.
FORMER_BUGS = {
    ("TypeError", "units.py", "system"): {"units": []},                        # `name not in SYSTEMS`, unhashable
    ("TokenError", "tokenize.py", "_tokenize"): {"E2": "(1"},                  # pint's parser, not caught in convert
    ("AssertionError", "pint_eval.py", "build_eval_tree"): {"E2": "$"},        # idem
}


def _parse(doc) -> None:
    try:
        parse_definition(doc, "fuzz.toml")
    except (DefinitionError, LayupError, InputError) as err:
        assert str(err).startswith("fuzz.toml: ") and "\n" not in str(err)


# filter_too_much: a dictionary drawn from twelve key names rejects repeated keys, which hypothesis counts as
# filtering (a health check that failed one full run out of many).
FAST = settings(max_examples=300, deadline=2000,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much])

LAYUP_ALPHABET = "[]()/0123456789-+±.@:*sSxX ,eE\t" + "abc"
layup_text = st.one_of(
    st.text(alphabet=LAYUP_ALPHABET, max_size=60),
    st.text(max_size=40),
    st.builds(lambda a, b, n: f"[{a}/{b}]{n}", st.integers(-400, 400), st.integers(-400, 400),
              st.sampled_from(["", "s", "2", "3s", "999999", "0", "-1", "s2", "ss"])),
)

scalars = st.one_of(st.none(), st.booleans(), st.integers(-10 ** 12, 10 ** 12),
                    st.floats(allow_nan=True, allow_infinity=True), st.text(max_size=30),
                    st.sampled_from(["181 GPa", "0.125 mm", "-1 MPa", "1e400 Pa", "nan", "10 degC", "1 parsec"]))
toml_values = st.recursive(st.one_of(*[s for s in (scalars,) if s is not None]).filter(lambda v: v is not None),
                           lambda inner: st.one_of(st.lists(inner, max_size=4),
                                                   st.dictionaries(st.text(max_size=12), inner, max_size=4)),
                           max_leaves=12)


@FAST
@given(layup_text)
def test_parse_layup_raises_only_layup_errors(text):
    try:
        plies = parse_layup(text)
    except LayupError:
        return
    assert len(plies) >= 1


def _paths(doc, prefix=()):
    """Every (path, value) of nested tables, to pick a place to break."""
    for key, value in doc.items():
        yield prefix + (key,)
        if isinstance(value, dict):
            yield from _paths(value, prefix + (key,))
        elif isinstance(value, list):
            for i, item in enumerate(value):
                if isinstance(item, dict):
                    yield from _paths(item, prefix + (key, i))


PATHS = list(_paths(BASE))


def _set(doc, path, value):
    node = doc
    for key in path[:-1]:
        node = node[key]
    node[path[-1]] = value


@FAST
@given(st.lists(st.tuples(st.sampled_from(PATHS), toml_values), min_size=1, max_size=3))
def test_parse_definition_on_mutated_documents(changes):
    doc = copy.deepcopy(BASE)
    for path, value in changes:
        try:
            _set(doc, path, value)
        except (KeyError, IndexError, TypeError):  # an earlier change replaced a parent
            pass
    _parse(doc)


@FAST
@given(st.dictionaries(st.sampled_from(["units", "materials", "laminates", "analysis", "zones", "cases",
                                        "combinations", "title", "frames", "fields", "resultants", "unitz"]),
                       toml_values, max_size=6))
def test_parse_definition_on_generated_documents(doc):
    _parse(doc)


@FAST
@given(layup_text)
def test_layups_inside_a_definition(text):
    doc = copy.deepcopy(BASE)
    doc["laminates"]["skin"]["layup"] = text
    _parse(doc)


@pytest.mark.parametrize("key", list(FORMER_BUGS), ids=[k[0] for k in FORMER_BUGS])
def test_former_bug(key):
    """Each input that once escaped as a raw exception now gives a definition error."""
    doc = copy.deepcopy(BASE)
    for name, value in FORMER_BUGS[key].items():
        if name == "units":
            doc["units"] = value
        else:
            doc["materials"]["cf"][name] = value
    with pytest.raises((DefinitionError, LayupError, InputError)):
        parse_definition(doc, "fuzz.toml")
