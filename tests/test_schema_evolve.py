"""coilstage.drawing.schema.evolve copies a frozen dataclass with some fields changed without running
its __init__ again: it must give exactly what dataclasses.replace (the standard library's reference)
gives, and that holds only while the drawing's classes keep everything in their fields."""

from __future__ import annotations

import dataclasses
import functools
import inspect

import pytest

from coilstage.drawing import schema
from coilstage.drawing.load import load_drawing
from coilstage.drawing.schema import Cable, Relay, Stage, evolve

CLASSES = [c for _, c in inspect.getmembers(schema, inspect.isclass) if dataclasses.is_dataclass(c)]


@pytest.mark.parametrize("cls", CLASSES, ids=lambda c: c.__name__)
def test_schema_classes_hold_nothing_outside_their_fields(cls):
    assert not hasattr(cls, "__post_init__"), f"{cls.__name__}: evolve would skip its __post_init__"
    cached = [n for n, v in vars(cls).items() if isinstance(v, functools.cached_property)]
    assert not cached, f"{cls.__name__}: evolve would copy the cached {cached}"
    assert "__slots__" not in vars(cls), f"{cls.__name__}: evolve copies __dict__"
    assert all(f.init for f in dataclasses.fields(cls)), f"{cls.__name__}: a field __init__ does not take"


@pytest.mark.parametrize("name", ["coach-24v-4stage", "light-truck-12v-2stage", "flawed-retrofit-24v"])
def test_evolve_equals_dataclasses_replace(name, coach_path):
    d = load_drawing(coach_path.parent / f"{name}.toml")
    for e in d.elements:
        changes = {"id": e.id + "-x"}
        if isinstance(e, Cable):
            changes.update(zone_temperature=e.zone_temperature + 17.0, length=e.length * 1.1)
        elif isinstance(e, Relay):
            changes.update(zone_temperature=e.zone_temperature - 3.0)
        elif isinstance(e, Stage):
            changes.update(coil=evolve(e.coil, r_ref=e.coil.r_ref * 0.95))
        new = evolve(e, **changes)
        assert vars(new) == vars(dataclasses.replace(e, **changes))  # every attribute, not only the fields
        assert type(new) is type(e)
        assert e.id != new.id  # the original is untouched
    assert vars(evolve(d, elements=d.elements[:1])) == vars(dataclasses.replace(d, elements=d.elements[:1]))


def test_evolve_refuses_a_name_that_is_no_field(coach_path):
    d = load_drawing(coach_path)
    with pytest.raises(TypeError, match="no field 'warmth'"):
        evolve(d.of_kind(Cable)[0], warmth=80.0)
