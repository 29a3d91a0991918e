"""Computed values in prose ({=name}) and the safety cautions every guide page shows."""

from __future__ import annotations

import pytest

from kitleaf.errors import SpecError
from kitleaf.guide.parse import parse_guide
from kitleaf.render.environment import make_environment, packaged_theme
from kitleaf.render.inline import prose_env
from kitleaf.render.prose import render_prose
from rules_kits import GUIDE, checks_of


def html_of(text: str, path: str = "guides/fb-t9.md") -> str:
    env = prose_env(path, checks_of(GUIDE).values)
    return "".join(p.content for p in render_prose(text, env) if p.kind == "html")


class TestInlineValues:
    def test_a_test_point_shows_with_unit_and_range(self):
        html = html_of(GUIDE + "\nThe collector reads {=boost.q1.collector}.\n")
        assert '<span class="computed"' in html
        assert "4.31 V (" in html  # the trade's rounding: three figures (kitleaf.values)

    def test_a_part_value_and_a_kit_value(self):
        html = html_of("R3 is {=r3}; the kit draws {=current}.")
        assert "8.2 kΩ" in html and " mA (" in html

    def test_code_spans_math_and_jinja_stay_literal(self):
        html = html_of("`{=r3}` and $x_{=1}$ and $y^{=a}$ and {{ r3 }} and {% r3 %} and { =r3}")
        assert "computed" not in html
        assert "{{ r3 }}" in html and "{% r3 %}" in html and "<code>{=r3}</code>" in html

    def test_without_values_references_stay_as_written(self):
        (piece,) = render_prose("Gain {=boost.gain}.")
        assert "{=boost.gain}" in piece.content

    def test_an_unknown_name_names_the_line_and_the_nearest_name(self):
        text = "# Title\n\nFirst line\nsecond line with {=boost.q1.colector}.\n"
        with pytest.raises(SpecError, match=r"did you mean 'boost\.q1\.collector'") as err:
            html_of(text)
        assert str(err.value.span) == "guides/fb-t9.md:4"

    def test_a_reference_in_a_table_cell(self):
        text = "Intro\n\n| where | volts |\n| --- | --- |\n| base | {=boost.q1.base} |\n"
        assert "1.49 V" in html_of(text)
        with pytest.raises(SpecError) as err:
            html_of(text.replace("q1.base", "q1.bass"))
        assert err.value.span.line == 5


class TestCautions:
    """The usual cautions of the trade (common practice, no source)."""

    def render(self, text: str) -> str:
        env = make_environment([packaged_theme()])
        return env.get_template("_cautions.html").render(guide=parse_guide("t.md", text))

    def test_the_usual_cautions_are_shown(self):
        html = self.render(GUIDE).lower()
        for words in ("soldering iron", "fume", "lead-bearing solder", "polarity",
                      "battery", "adapter", "never open mains", "local codes",
                      "instructions of the makers"):
            assert words in html, words

    def test_a_kit_caution_is_added(self):
        text = GUIDE.replace("source: low-z", "source: low-z\ncaution: Mind the sharp edges.")
        assert "Mind the sharp edges." in self.render(text)
