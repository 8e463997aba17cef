"""Tests of the stacking-sequence parser, shells.stacking.

Sources of check values: the expansions below follow the laminate orientation
code as analysts write it (slashes between plies, ± pairs, subscript repeat
counts, subscript s for a symmetric stack with the repeat applied before the
mirror, a bar over an unrepeated middle ply): common practice. The ASCII
spellings (``+-``, ``*`` for the bar, ``:`` and ``@`` overrides) are plybridge's
own and are specified in docs/layup.md.
"""

from __future__ import annotations

import pytest
from hypothesis import given, settings, strategies as st

from shells.errors import InputError, LayupError
from shells.stacking import MAX_DEPTH, MAX_PLIES, MAX_TEXT, LayerSpec, parse_layup


def angles(text: str, **kw) -> list[float]:
    return [ply.angle for ply in parse_layup(text, **kw)]


# ----------------------------------------------------------------------------- worked expansions

@pytest.mark.parametrize("text, expected", [
    # simple listing, bottom ply first (docs/conventions.md: ply 1 at the bottom)
    ("[0/45/-45/90]", [0, 45, -45, 90]),
    ("0/45/-45/90", [0, 45, -45, 90]),                         # outer brackets optional (docs/layup.md)
    # 8-ply quasi-isotropic stack [0/±45/90]s: common practice
    ("[0/±45/90]s", [0, 45, -45, 90, 90, -45, 45, 0]),
    ("[0/+-45/90]s", [0, 45, -45, 90, 90, -45, 45, 0]),        # ASCII spelling of ± (docs/layup.md)
    # ± gives + then −, ∓ gives − then +: common practice
    ("[±30]", [30, -30]),
    ("[∓30]", [-30, 30]),
    ("[-+30]", [-30, 30]),
    ("[−30/+15]", [-30, 15]),                                 # Unicode minus sign U+2212 (docs/layup.md)
    # repeat counts on groups and on the whole stack: common practice
    ("(±45)3", [45, -45] * 3),
    ("[0/90]3", [0, 90] * 3),
    ("[(0/90)2/45]", [0, 90, 0, 90, 45]),
    ("[((0/90)2/45)2]", [0, 90, 0, 90, 45] * 2),
    # symmetric stacks: mirror about the mid-plane, common practice
    ("[0/45/90]s", [0, 45, 90, 90, 45, 0]),
    # repeat, then mirror: [0/90]2s = 8 plies, common practice
    ("[0/90]2s", [0, 90, 0, 90, 90, 0, 90, 0]),
    ("[0/90]2S", [0, 90, 0, 90, 90, 0, 90, 0]),
    # symmetry on an inner group: common practice
    ("[(0/90)s/45]", [0, 90, 90, 0, 45]),
    ("[(±45)s/0]2", [45, -45, -45, 45, 0] * 2),
    # odd middle ply not repeated (bar over the middle ply, here '*'): common practice
    ("[0/45/90*]s", [0, 45, 90, 45, 0]),
    ("[(0/90)2/45*]s", [0, 90, 0, 90, 45, 90, 0, 90, 0]),
    ("[0/(30/60*)s]s", [0, 30, 60, 30, 30, 60, 30, 0]),
    ("[90*]s", [90]),
    # decimals and whitespace (docs/layup.md)
    ("  [ 0 / 22.5 / ±67.5 ] s ", [0, 22.5, 67.5, -67.5, -67.5, 67.5, 22.5, 0]),
    ("[.5/12./1.5e1]", [0.5, 12, 15]),
    ("[0/\n90\t]", [0, 90]),
])
def test_worked_expansions(text, expected):
    assert angles(text) == expected


def test_negative_zero_is_zero():
    # ±0 is two 0° plies (common practice); no −0.0 leaks out
    result = angles("[±0/-0]")
    assert result == [0, 0, 0]
    assert all(str(a) == "0.0" for a in result)


def test_overrides_per_ply():
    # per-ply material and thickness overrides, either order (docs/layup.md)
    plies = parse_layup("[0:glass-fabric@0.3/90@0.25/45:cf_ud.v2/-45 @ 1.5e-4 : cf-ud]")
    assert plies == (
        LayerSpec(0.0, "glass-fabric", 0.3),
        LayerSpec(90.0, None, 0.25),
        LayerSpec(45.0, "cf_ud.v2", None),
        LayerSpec(-45.0, "cf-ud", 1.5e-4),
    )


def test_pair_override_applies_to_both_plies():
    # ±45:cf-ud gives both plies the material (docs/layup.md)
    assert parse_layup("[±45:cf-ud]") == (LayerSpec(45.0, "cf-ud"), LayerSpec(-45.0, "cf-ud"))


def test_sandwich_core_in_the_middle():
    # one 12.7 mm (1/2 in) core between two [0/±45] faces: common practice
    plies = parse_layup("[0/±45/0:honeycomb@12.7*]s")
    assert [p.angle for p in plies] == [0, 45, -45, 0, -45, 45, 0]
    assert [p.material for p in plies].count("honeycomb") == 1
    assert plies[3] == LayerSpec(0.0, "honeycomb", 12.7)


def test_defaults_and_frozen():
    ply = parse_layup("[45]")[0]
    assert ply == LayerSpec(45.0) and ply.material is None and ply.thickness is None
    with pytest.raises(AttributeError):
        ply.angle = 0.0


def test_layup_error_is_an_input_error():
    # the hierarchy in shells/errors.py: the CLI catches InputError, Python callers ValueError
    with pytest.raises(InputError):
        parse_layup("[0/x]")
    with pytest.raises(ValueError):
        parse_layup("[0/x]")


# ----------------------------------------------------------------------------- errors

@pytest.mark.parametrize("text, column, words", [
    ("", 1, "empty"),
    ("   ", 4, "empty"),
    ("[]", 2, "empty group"),
    ("[0/()]", 5, "empty group"),
    ("[0//90]", 4, "extra '/'"),
    ("[/0]", 2, "extra '/'"),
    ("[0/]", 4, "trailing '/'"),
    ("[0/90", 6, "missing ']'"),
    ("[(0/90]", 7, "')'"),
    ("[0/90)", 6, "']'"),
    ("[0/90]]", 7, "unmatched"),
    ("[0/x]", 4, "angle"),
    ("[0,90]", 3, "'/'"),
    ("[0°/90]", 3, "degree"),
    ("[0/[45]]", 4, "parentheses"),
    ("[0/90]/45", 7, "inside one pair of brackets"),
    ("0/90s", 5, "symmetry suffix"),
    ("[0/90]s2", 8, "before 's'"),
    ("[(0/90)0]", 8, "positive"),
    ("[(0/90)03]", 8, "leading zeros"),
    ("[02/90]", 2, "(0)2"),
    ("[902]", 2, "(90)2"),
    ("[++45]", 3, "digits"),
    ("[± 45]", 3, "digits"),
    ("[0:]", 4, "material name"),
    ("[0:-x]", 4, "material name"),
    ("[0@]", 4, "thickness"),
    ("[0@0]", 4, "positive"),
    ("[0@-1]", 4, "thickness"),
    ("[0:a:b]", 5, "second ':'"),
    ("[0@1@2]", 5, "second '@'"),
    ("[(0/90):cf-woven]", 8, "single plies"),
    ("[(0/90)2@0.3]", 9, "single plies"),
    ("[0/45*/90]s", 6, "not the last"),
    ("[0/90*]", 6, "no 's'"),
    ("0/90*", 5, "no 's'"),
    ("[0/(45/90*)]s", 10, "no 's'"),
    ("[0/90*]2s", 6, "repeat count"),
    ("[0/±45*]s", 7, "± pair"),
    ("[0]999999999", 4, "999999999 plies, more than the cap of 2000"),
])
def test_error_names_text_column_and_fix(text, column, words):
    with pytest.raises(LayupError) as info:
        parse_layup(text)
    message = str(info.value)
    assert message.startswith(f"layup {text!r}: column {column}: "), message
    assert words in message
    assert "; " in message.split(f"column {column}: ", 1)[1], "a fix follows the problem"
    assert "\n" not in message  # the CLI prints one line


def test_nesting_depth_is_bounded():
    ok = "(" * MAX_DEPTH + "0" + ")" * MAX_DEPTH
    assert angles(ok) == [0]
    deep = "(" * (MAX_DEPTH + 1) + "0" + ")" * (MAX_DEPTH + 1)
    with pytest.raises(LayupError, match=f"column {MAX_DEPTH + 1}: groups nest more than {MAX_DEPTH} deep"):
        parse_layup(deep)


def test_text_length_is_capped():
    text = "[" + "/".join(["0"] * (MAX_TEXT // 2)) + "]"
    with pytest.raises(LayupError, match=f"more than the limit of {MAX_TEXT}") as info:
        parse_layup(text)
    assert len(str(info.value)) < 400  # a long text is quoted as an excerpt


def test_ply_cap_is_checked_before_expanding():
    # each of these would need gigabytes if expanded; they must fail on the counts alone
    for text in ("[0]999999999", "((((0/90)999999999)999999999)999999999)s",
                 "[" + "/".join(["(0)999999"] * 50) + "]", "[(0)" + "9" * 5000 + "]"):
        with pytest.raises(LayupError, match="cap"):
            parse_layup(text)


def test_custom_cap():
    assert len(parse_layup("[0/90]2s", max_plies=8)) == 8
    with pytest.raises(LayupError, match="expands to 8 plies, more than the cap of 7"):
        parse_layup("[0/90]2s", max_plies=7)
    assert len(parse_layup("[0]" + str(MAX_PLIES))) == MAX_PLIES
    for bad in (0, -1, 2.5, True):
        with pytest.raises(LayupError, match="max_plies"):
            parse_layup("[0]", max_plies=bad)


def test_non_text_is_refused():
    with pytest.raises(LayupError, match="must be text"):
        parse_layup(45)


def test_long_text_error_shows_excerpt_around_column():
    text = "[" + "0/" * 100 + "x]"
    with pytest.raises(LayupError) as info:
        parse_layup(text)
    message = str(info.value)
    assert f"column {len(text) - 1}:" in message and "x]" in message and "characters)" in message


# ----------------------------------------------------------------------------- property tests

SIGNED = {1: ("", "+"), -1: ("-", "\u2212")}
PAIRS = {(1, -1): ("±", "+-"), (-1, 1): ("∓", "-+")}

magnitudes = st.one_of(st.integers(0, 180).map(float),
                       st.floats(0, 360, allow_nan=False).map(lambda x: round(x, 3)))
materials = st.none() | st.from_regex(r"[A-Za-z0-9][A-Za-z0-9_.-]{0,8}", fullmatch=True)
thicknesses = st.none() | st.floats(1e-5, 100.0, allow_nan=False)
spaces = st.sampled_from(["", "", " ", "  "])


@st.composite
def ply_terms(draw, allow_pairs=True):
    """(text, expected plies) of one ply term: a signed angle or a ± pair, with optional overrides."""
    magnitude = draw(magnitudes)
    signs = draw(st.sampled_from([(1,), (-1,)] + ([(1, -1), (-1, 1)] if allow_pairs else [])))
    spelling = draw(st.sampled_from(SIGNED[signs[0]] if len(signs) == 1 else PAIRS[signs]))
    material, thickness = draw(materials), draw(thicknesses)
    text = spelling + repr(magnitude)
    if material is not None:
        text += draw(spaces) + ":" + draw(spaces) + material
    if thickness is not None:
        text += draw(spaces) + "@" + draw(spaces) + repr(thickness)
    plies = tuple(LayerSpec(s * magnitude, material, thickness) for s in signs)
    return text, plies


@given(st.lists(st.tuples(ply_terms(), st.integers(1, 4)), min_size=1, max_size=12), spaces)
@settings(max_examples=150, deadline=None)
def test_rendered_stack_round_trips(terms, pad):
    # property 1: random (angle, repeat) lists rendered to text parse back to the same plies
    text = "[" + "/".join(pad + (t if n == 1 else f"({t}){n}") + pad for (t, _), n in terms) + "]"
    expected = tuple(p for (_, plies), n in terms for p in plies * n)
    assert parse_layup(text) == expected


@st.composite
def stacks(draw, depth=3):
    """(text, expected plies) of a '/'-separated sequence, with nested groups to ``depth``."""
    items = []
    for _ in range(draw(st.integers(1, 3))):
        if depth > 0 and draw(st.booleans()):
            inner, plies = draw(stacks(depth - 1))
            count = draw(st.integers(1, 3))
            mirror = draw(st.booleans())
            middle = mirror and count == 1 and draw(st.booleans())
            if middle:
                mid_text, mid = draw(ply_terms(allow_pairs=False))
                inner, plies = f"{inner}/{mid_text}*", plies + mid
            body = plies * count
            if mirror:
                body = body + (body[-2::-1] if middle else body[::-1])
            items.append((f"({inner}){count if count > 1 else ''}{'s' if mirror else ''}", body))
        else:
            items.append(draw(ply_terms()))
    return "/".join(t for t, _ in items), tuple(p for _, ps in items for p in ps)


@given(stacks())
@settings(max_examples=100, deadline=None)
def test_nested_stack_expands_as_specified(stack):
    text, expected = stack
    assert parse_layup(f"[{text}]", max_plies=10**6) == expected


@given(stacks(), st.booleans())
@settings(max_examples=100, deadline=None)
def test_symmetric_stack_is_a_palindrome(stack, middle):
    # property 2: any [...]s reads the same from either face (plies, materials and thicknesses)
    text, _ = stack
    if middle:
        text += "/90*"
    plies = parse_layup(f"[{text}]s", max_plies=10**6)
    assert plies == plies[::-1]
    assert len(plies) % 2 == (1 if middle else 0)


@given(stacks(depth=2), st.integers(1, 5))
@settings(max_examples=100, deadline=None)
def test_repeated_symmetric_stack_size(stack, n):
    # property 3: [X]ns has 2·n·len(X) plies (common practice: repeat, then mirror)
    text, _ = stack
    single = parse_layup(f"[{text}]", max_plies=10**6)
    repeated = parse_layup(f"[{text}]{n}s", max_plies=10**6)
    assert len(repeated) == 2 * n * len(single)
    assert repeated[:len(single)] == single


NOTATION = list("0123456789+-±∓−/()[]sS*:@.eE _x\t°,") + ["90", "45", ")3", "(", "s", "*]s"]


def _check_outcome(text):
    try:
        plies = parse_layup(text)
    except LayupError as err:
        assert str(err).startswith("layup ")
        return
    assert isinstance(plies, tuple) and 1 <= len(plies) <= MAX_PLIES
    assert all(isinstance(p, LayerSpec) and abs(p.angle) <= 360 for p in plies)


@given(st.lists(st.sampled_from(NOTATION), max_size=40).map("".join))
@settings(max_examples=300, deadline=None)
def test_fuzz_notation_characters_raise_only_layup_error(text):
    # property 4: any text either parses or raises LayupError, never anything else
    _check_outcome(text)


@given(st.text(max_size=60))
@settings(max_examples=200, deadline=None)
def test_fuzz_arbitrary_text_raises_only_layup_error(text):
    _check_outcome(text)


@given(stacks(depth=2), st.data())
@settings(max_examples=150, deadline=None)
def test_fuzz_mutated_valid_text_raises_only_layup_error(stack, data):
    text = f"[{stack[0]}]s"
    at = data.draw(st.integers(0, len(text)))
    cut = data.draw(st.integers(0, 3))
    insert = data.draw(st.lists(st.sampled_from(NOTATION), max_size=3).map("".join))
    _check_outcome(text[:at] + insert + text[at + cut:])
