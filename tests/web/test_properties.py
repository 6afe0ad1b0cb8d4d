"""Properties that must hold for every input, explored with hypothesis."""

import json

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from calc import InputError
from calc.film import film_chain
from calc.units import convert
from tests.calc.test_units import GROUPS
from webapp.calculators import CALCULATORS

positive = st.floats(min_value=1e-6, max_value=1e6, allow_nan=False, allow_infinity=False)
fraction = st.floats(min_value=0.0, max_value=1.0)
same_dimension_pair = st.sampled_from(list(GROUPS.values())).flatmap(
    lambda units: st.tuples(st.sampled_from(units), st.sampled_from(units))
)


@given(value=positive, pair=same_dimension_pair)
def test_every_conversion_round_trips(value, pair):
    source, target = pair
    there = convert(f"{value!r} {source}", target)
    back = convert(there, source)
    assert back.magnitude == pytest.approx(value, rel=1e-9)


CROSS = [("um", "g/m2"), ("mil", "lb/ream"), ("BCM/in2", "g/m2"), ("l", "kg"), ("gal", "lb"), ("um", "m2/kg")]


@given(value=positive, pair=st.sampled_from(CROSS), density=st.floats(min_value=0.3, max_value=5.0))
def test_density_conversions_round_trip(value, pair, density):
    source, target = pair
    there = convert(f"{value!r} {source}", target, f"{density!r} g/cm3")
    back = convert(there, source, f"{density!r} g/cm3")
    assert back.magnitude == pytest.approx(value, rel=1e-9)


FILM_OUTPUTS = ("theoretical_wet", "plate_wet", "substrate_wet", "dry", "wet_coat_weight", "dry_coat_weight")


def chain_values(volume, t_ap, t_ps, s_v, s_w, density):
    chain = film_chain(f"{volume!r} BCM/in2", t_ap, t_ps, s_v, s_w, f"{density!r} g/cm3")
    return [getattr(chain, name).magnitude for name in FILM_OUTPUTS]


@settings(suppress_health_check=[HealthCheck.too_slow])
@given(
    inputs=st.tuples(
        st.floats(min_value=0.01, max_value=100.0),
        fraction,
        fraction,
        fraction,
        fraction,
        st.floats(min_value=0.3, max_value=5.0),
    ),
    which=st.integers(min_value=0, max_value=5),
    bump=st.floats(min_value=0.0, max_value=1.0),
)
def test_film_chain_is_monotonic_in_each_input(inputs, which, bump):
    inputs = list(inputs)
    raised = list(inputs)
    upper = {0: 100.0, 5: 5.0}.get(which, 1.0)
    raised[which] = inputs[which] + (upper - inputs[which]) * bump
    before = chain_values(*inputs)
    after = chain_values(*raised)
    for low, high in zip(before, after, strict=True):
        assert high >= low * (1 - 1e-12)
    # ... and the chain only ever loses ink on its way to the substrate.
    assert before[0] >= before[1] >= before[2] >= before[3]


json_values = st.recursive(
    st.none()
    | st.booleans()
    | st.integers()
    | st.floats()
    | st.text(max_size=20)
    | st.sampled_from(["4 BCM/in2", "1 g/cm3", "330 mm", "12000 m", "18 in", "0.5", "-1 um", "1e999 m", "um"]),
    lambda children: st.lists(children, max_size=4) | st.dictionaries(st.text(max_size=12), children, max_size=5),
    max_leaves=12,
)
# Every request field name of every calculation, from the specs' own field dicts.
FIELDS = sorted(
    {name for spec in CALCULATORS for name in {**spec.required, **spec.optional}}
    | {name for spec in CALCULATORS for required, optional in spec.nested.values() for name in {**required, **optional}}
)
bodies = json_values | st.dictionaries(st.sampled_from(FIELDS), json_values, max_size=8)


@settings(max_examples=300, suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow])
@given(path=st.sampled_from([f"/api/v1/{spec.kind}" for spec in CALCULATORS]), body=bodies)
def test_api_never_answers_5xx(client, path, body):
    response = client.post(path, data=json.dumps(body), content_type="application/json")
    assert response.status_code < 500
    answer = response.get_json()
    if response.status_code >= 400:
        assert set(answer) == {"error"}
        assert answer["error"]["message"]


@settings(max_examples=200, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(raw=st.binary(max_size=200))
def test_api_never_answers_5xx_to_raw_bytes(client, raw):
    response = client.post("/api/v1/film", data=raw, content_type="application/json")
    assert response.status_code == 400


@given(text=st.text(max_size=30), unit=st.text(max_size=15))
def test_convert_raises_only_input_errors(text, unit):
    try:
        convert(text, unit)
    except InputError as error:
        assert error.message
