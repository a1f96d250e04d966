"""``@record`` behaves as ``@dataclass(frozen=True)`` (the reference: Python's own dataclasses).

Each check builds the same class both ways and compares what the standard library's
generated methods give with what the shared ones give.
"""

from __future__ import annotations

import dataclasses
import pickle

import pytest

from ridesim.records import record


@record
class Point:
    x: float
    y: float = 0.0


def _pair():
    def body():
        return {"__annotations__": {"a": "float", "b": "str", "note": "str", "tag": "int"},
                "a": 1.0, "b": "x",
                "note": dataclasses.field(default="n", compare=False, repr=False),
                "tag": dataclasses.field(default=3, hash=False),
                "__module__": __name__}
    ref = dataclasses.dataclass(frozen=True)(type("Rec", (), body()))
    ours = record(type("Rec", (), body()))
    return ref, ours


@pytest.mark.parametrize("args, kw", [((), {}), ((2.5, "y"), {"note": "m", "tag": 7}),
                                      ((0.0,), {"tag": -1})])
def test_eq_hash_repr_match_the_standard_library(args, kw):
    ref, ours = _pair()
    r1, r2 = ref(*args, **kw), ref(*args, **{**kw, "note": "other"})
    o1, o2 = ours(*args, **kw), ours(*args, **{**kw, "note": "other"})
    assert repr(o1) == repr(r1)
    assert hash(o1) == hash(r1)
    assert (o1 == o2) is (r1 == r2) is True  # note is not compared
    assert (o1 == ours(9.0)) is (r1 == ref(9.0)) is False
    assert o1.__eq__(r1) is NotImplemented and r1.__eq__(o1) is NotImplemented


def test_frozen_replace_fields_and_pickle_are_dataclasses_own():
    _, ours = _pair()
    o = ours(2.0, "z")
    with pytest.raises(dataclasses.FrozenInstanceError):
        o.a = 3.0
    assert dataclasses.is_dataclass(o)
    assert [f.name for f in dataclasses.fields(o)] == ["a", "b", "note", "tag"]
    assert dataclasses.replace(o, a=5.0) == ours(5.0, "z")
    p = Point(1.5, -2.0)
    assert pickle.loads(pickle.dumps(p)) == p


def test_unhashable_field_raises_as_the_standard_library_does():
    ref, ours = _pair()
    with pytest.raises(TypeError):
        hash(ref([1], "x"))
    with pytest.raises(TypeError):
        hash(ours([1], "x"))
