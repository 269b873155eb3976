"""``--json`` prints one line; ``--pretty`` the same object indented by two spaces.

Reference: the standard library's JSON reader and writer (RFC 8259 text): the one-line text
and the indented one must read back to the same object, the indented one being exactly what
``json.dumps(obj, indent=2, ensure_ascii=False)`` writes of it.
"""

from __future__ import annotations

import io
import json
import math
from pathlib import Path

import numpy as np
import pytest

from lodeline.tui.cli import main
from lodeline.tui.commands.common import json_text

DEMO = Path(__file__).parents[1] / "demo_traverses" / "wrenfield_glebe_1911.toml"
COMMANDS = (
    ["convert", str(DEMO)],
    ["close", str(DEMO)],
    ["fit", str(DEMO)],
    ["stakeout", str(DEMO)],
    ["describe", str(DEMO)],
)


def _out(capsys, args: list[str]) -> str:
    capsys.readouterr()
    assert main(args) == 0
    return capsys.readouterr().out


@pytest.mark.parametrize("args", COMMANDS, ids=lambda a: a[0])
def test_one_line_and_pretty_are_the_same_object(capsys, args):
    compact = _out(capsys, [*args, "--json"])
    pretty = _out(capsys, [*args, "--json", "--pretty"])
    assert compact.endswith("\n") and compact.count("\n") == 1
    obj = json.loads(compact)
    assert json.loads(pretty) == obj
    assert pretty == json.dumps(obj, indent=2, ensure_ascii=False) + "\n"


def test_numpy_values_and_non_finite_floats():
    obj = {"a": np.float64(1.5), "b": np.arange(3), "c": np.int64(7), "d": (1, 2.5)}
    assert json.loads(json_text(obj)) == {"a": 1.5, "b": [0, 1, 2], "c": 7, "d": [1, 2.5]}
    # NaN and infinities are null (JSON has no such numbers), in both layouts
    bad = {"x": math.nan, "y": [1.0, math.inf], "z": np.array([np.nan, 2.0])}
    for pretty in (False, True):
        assert json.loads(json_text(bad, pretty=pretty)) == {
            "x": None,
            "y": [1.0, None],
            "z": [None, 2.0],
        }
    # the one-line text is compact (no space after ":" and ","), as RFC 8259 allows
    assert json_text(bad) == '{"x":null,"y":[1.0,null],"z":[null,2.0]}'


def test_the_one_line_json_is_the_same_on_every_kind_of_standard_output(monkeypatch):
    """The JSON goes to a UTF-8 standard output's byte buffer as written, after what was
    printed before it; a text-only output, or one in another encoding, gets the same text."""
    obj = {"title": "Glebe of Wrenfield — 1911", "x": [1.5, math.nan], "n": np.int64(3)}
    expected = json_text(obj) + "\n"
    from lodeline.tui.commands.common import print_json

    for encoding in ("utf-8", "latin-1"):
        raw = io.BytesIO()
        out = io.TextIOWrapper(raw, encoding=encoding, errors="replace", newline="")
        monkeypatch.setattr("sys.stdout", out)
        out.write("before\n")
        print_json(obj)
        out.flush()
        text = raw.getvalue().decode(encoding, errors="replace")
        kept = expected.encode(encoding, errors="replace").decode(encoding)
        assert text == "before\n" + kept
    plain = io.StringIO()
    monkeypatch.setattr("sys.stdout", plain)
    print_json(obj)
    assert plain.getvalue() == expected
