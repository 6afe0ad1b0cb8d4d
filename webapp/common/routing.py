"""URL rules whose address builders are made when first used, not at start-up.

werkzeug turns every rule into two small Python functions that build its
address (for ``url_for``), generated as code and compiled when the rule is
added: for inkfilm's ~120 rules that is a good part of ``create_app``. Most
are never used by a given server process, or long after its first answer, so
:class:`LazyRule` makes each builder the first time it is asked for, with
werkzeug's own code: the same functions, the same addresses
(``tests/web/test_routing.py`` checks every rule against werkzeug's own).
"""

from __future__ import annotations

from werkzeug.routing import Rule


class LazyRule(Rule):
    """A werkzeug ``Rule`` that compiles its address builders on first use (Flask's ``url_rule_class``)."""

    def _compile_builder(self, append_unknown: bool = True):
        name = "_build_unknown" if append_unknown else "_build"

        def build_when_asked(rule, **values):
            builder = Rule._compile_builder(rule, append_unknown).__get__(rule, None)
            setattr(rule, name, builder)  # from now on the compiled builder itself
            return builder(**values)

        return build_when_asked
