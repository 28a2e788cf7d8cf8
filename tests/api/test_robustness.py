"""No finite input ever gives a 5xx: every answer is a result or a problem document."""

from __future__ import annotations

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from service import create_app

finite = st.floats(allow_nan=False, allow_infinity=False, width=64)
samples = st.one_of(
    st.lists(finite, min_size=0, max_size=60),
    st.lists(st.sampled_from([0.0, 1.0, 2.0, 1e7, 1e7 + 0.1, -3.5]), min_size=0, max_size=60),
    st.lists(st.one_of(finite, st.none()), min_size=0, max_size=60),
    st.lists(st.integers(min_value=-(2**62), max_value=2**62), min_size=0, max_size=60),
)


@pytest.fixture(scope="module")
def module_client():
    return create_app({"TESTING": True}).test_client()


@pytest.mark.parametrize("path, component", [("/v1/describe", "DescribeResponse"), ("/v1/normality", "NormalityResponse")])
@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(values=samples)
def test_finite_arrays_never_fail(module_client, conforms, path, component, values):
    r = module_client.post(path, json={"values": values})
    assert r.status_code in (200, 422), r.get_data(as_text=True)
    doc = r.get_json()
    if r.status_code == 200:
        conforms(doc, component)  # numbers are numbers: no NaN or null slipped through
        assert doc["input"]["n"] + doc["input"]["missing"] == len(values)
    else:
        assert r.mimetype == "application/problem+json" and doc["detail"]
