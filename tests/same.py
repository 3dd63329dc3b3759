"""Equality to the last bit, for tests that compare two ways of getting the same thing (the deck's
quick and reference readers, a model before and after solving, a study run serially and on Dask)."""

import dataclasses

import numpy as np


def assert_same(a, b, where="model"):
    """Assert a and b equal to the last bit, arrays (NaN included), dataclasses, containers."""
    if isinstance(a, np.ndarray) or isinstance(b, np.ndarray):
        a, b = np.asarray(a), np.asarray(b)
        assert a.dtype == b.dtype and a.shape == b.shape, where
        if a.dtype.kind in "fc":
            assert np.array_equal(a, b, equal_nan=True), where
            parts = (a.real, a.imag, b.real, b.imag) if a.dtype.kind == "c" else (a, a, b, b)
            assert all(np.array_equal(np.signbit(x), np.signbit(y)) for x, y in zip(parts[:2], parts[2:])), \
                where + " (signs of zeros)"
        else:
            assert np.array_equal(a, b), where
    elif dataclasses.is_dataclass(a) and not isinstance(a, type):
        assert type(a) is type(b), where
        for f in dataclasses.fields(a):
            assert_same(getattr(a, f.name), getattr(b, f.name), f"{where}.{f.name}")
    elif isinstance(a, dict):
        assert isinstance(b, dict) and list(a) == list(b), where
        for k in a:
            assert_same(a[k], b[k], f"{where}[{k!r}]")
    elif isinstance(a, (list, tuple)):
        assert type(a) is type(b) and len(a) == len(b), where
        for k, (x, y) in enumerate(zip(a, b)):
            assert_same(x, y, f"{where}[{k}]")
    elif isinstance(a, float) and isinstance(b, float):
        assert (a == b and np.signbit(a) == np.signbit(b)) or (a != a and b != b), where
    elif hasattr(a, "__dict__") and not callable(a):
        assert type(a) is type(b), where
        assert_same(vars(a), vars(b), where)
    else:
        assert a == b, f"{where}: {a!r} != {b!r}"


def assert_same_columns(a, b):
    """Two studies' tables: every column but the timings equal, to the bit (NaN where a variant did not solve)."""
    assert a.columns.keys() == b.columns.keys()
    for k in a.columns:
        if k == "seconds":
            continue
        x, y = a.columns[k], b.columns[k]
        if isinstance(x[0], float):
            np.testing.assert_array_equal(np.array(x, float), np.array(y, float), err_msg=k)
        else:
            assert x == y, k
