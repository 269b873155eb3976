"""The fast constructor of the result objects made by the thousand (geo.frozen.quick_init).

What is checked is that it makes the very object the dataclass's own constructor makes:
the reference is Python's ``dataclasses`` module, run side by side on a twin class.
"""

from __future__ import annotations

import copy
import dataclasses
import pickle

import pytest

from lodeline.geo.bearings import Bearing
from lodeline.geo.calls import Call, Distance
from lodeline.geo.document import RecordedCourse
from lodeline.geo.frozen import quick_init
from lodeline.geo.north import CourseConversion, References, Station


def _twin(cls: type) -> type:
    """The same fields as ``cls`` in a slotted frozen dataclass with the generated __init__."""
    fields = [
        (f.name, f.type, dataclasses.field(default=f.default))
        if f.default is not dataclasses.MISSING
        else (f.name, f.type)
        for f in dataclasses.fields(cls)
    ]
    return dataclasses.make_dataclass(cls.__name__, fields, frozen=True, slots=True)


@pytest.mark.parametrize(
    "cls", [Bearing, Distance, Call, RecordedCourse, Station, References, CourseConversion]
)
def test_the_hot_classes_are_made_as_the_dataclass_makes_them(cls):
    twin = _twin(cls)
    names = [f.name for f in dataclasses.fields(cls)]
    required = [f.name for f in dataclasses.fields(cls) if f.default is dataclasses.MISSING]
    values = {n: (i, f"v{i}") for i, n in enumerate(names)}  # hashable, distinct
    ours = cls(*(values[n] for n in required))
    theirs = twin(*(values[n] for n in required))
    assert dataclasses.astuple(ours) == dataclasses.astuple(theirs)  # defaults included
    ours = cls(**values)
    theirs = twin(**values)
    assert dataclasses.astuple(ours) == dataclasses.astuple(theirs)
    assert cls(*values.values()) == ours and hash(cls(*values.values())) == hash(ours)
    assert repr(ours).split("(", 1)[1] == repr(theirs).split("(", 1)[1]
    with pytest.raises(dataclasses.FrozenInstanceError):
        setattr(ours, names[0], None)
    assert pickle.loads(pickle.dumps(ours)) == ours
    assert copy.deepcopy(ours) == ours
    changed = dataclasses.replace(ours, **{names[-1]: "other"})
    assert getattr(changed, names[-1]) == "other" and changed != ours
    with pytest.raises(TypeError):
        cls(*values.values(), "one too many")
    if len(required) > 1:
        with pytest.raises(TypeError):
            cls(*(values[n] for n in required[:-1]))


def test_what_it_cannot_make_the_same_is_refused_at_import():
    @dataclasses.dataclass(frozen=True)
    class Unslotted:
        a: int

    @dataclasses.dataclass(frozen=True, slots=True)
    class Factory:
        a: list = dataclasses.field(default_factory=list)

    @dataclasses.dataclass(slots=True)
    class Unfrozen:
        a: int

    @dataclasses.dataclass(frozen=True, slots=True)
    class Checked:
        a: int

        def __post_init__(self) -> None:
            pass

    for cls in (Unslotted, Factory, Unfrozen, Checked):
        with pytest.raises(TypeError, match="quick_init"):
            quick_init(cls)
