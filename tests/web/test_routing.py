"""Every address the app builds with its lazily compiled rules is the one werkzeug's own rules build.

Reference: werkzeug's ``Rule`` (https://werkzeug.palletsprojects.com/en/stable/routing/),
compiled as werkzeug compiles it when the rule is added.
"""

from __future__ import annotations

import pytest
from werkzeug.routing import AnyConverter, IntegerConverter, Map, Rule

from webapp.common.routing import LazyRule


def _sample(rule) -> dict:
    values = {}
    for name in rule.arguments:
        converter = rule._converters.get(name)
        if isinstance(converter, AnyConverter):
            values[name] = sorted(converter.items)[0]
        elif isinstance(converter, IntegerConverter):
            values[name] = 7
        else:
            values[name] = "a b/ü"
    return values


def test_the_app_uses_lazy_rules(app):
    # Flask adds its static rule as it is made, before create_app sets the rule class.
    rules = [rule for rule in app.url_map.iter_rules() if rule.endpoint != "static"]
    assert len(rules) >= 100 and all(isinstance(rule, LazyRule) for rule in rules)


def test_every_rule_builds_the_address_werkzeugs_rule_builds(app):
    ours = app.url_map
    reference = Map(
        [Rule(r.rule, endpoint=r.endpoint, defaults=r.defaults, methods=r.methods) for r in ours.iter_rules()],
        converters=ours.converters,
    )
    built = 0
    for rule in reference.iter_rules():
        values = _sample(rule)
        for extra in ({}, {"v": "1a2b", "next": "/x y"}):
            with app.test_request_context():
                got = ours.bind("localhost").build(rule.endpoint, {**values, **extra}, method=sorted(rule.methods)[0])
            expected = reference.bind("localhost").build(
                rule.endpoint, {**values, **extra}, method=sorted(rule.methods)[0]
            )
            assert got == expected, rule.rule
            built += 1
    assert built >= 2 * 100


def test_a_missing_value_fails_as_it_does_with_werkzeugs_rule(app):
    from werkzeug.routing import BuildError

    rule = next(r for r in app.url_map.iter_rules() if r.arguments)
    with pytest.raises(BuildError):
        app.url_map.bind("localhost").build(rule.endpoint, {}, method=sorted(rule.methods)[0])
