"""The stability check: a setting whose small-signal circuit has a pole in the right half plane
is found, named by the `stable` rule, and its small-signal figures are shown as not meaningful
on the page, in `kitleaf specs` and in the JSON."""

from __future__ import annotations

import math
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
from tests.stages.kits import POWER, guide_text, make_kit, stage_block

from kitleaf.circuit.build import build_circuit
from kitleaf.engine import growing
from kitleaf.errors import SpecError
from kitleaf.guide.parse import parse_guide
from kitleaf.render.environment import make_environment, packaged_theme
from kitleaf.render.inline import prose_env
from kitleaf.render.prose import render_prose
from kitleaf.render.specs_text import specs_to_text
from kitleaf.specs.claims import verify
from kitleaf.specs.derive import derive_specs, solve_kit
from kitleaf.specs.export import specs_to_json
from kitleaf.specs.lookup import computed_values
from kitleaf.specs.model import Range
from kitleaf.specs.solve import KitState
from kitleaf.specs.stability import unstable_at

DEMO_GUIDES = Path(__file__).parent.parent / "guides"
R, C = 10e3, 10e-9  # the Wien bridge's arms


def wien(feedback: str) -> str:
    """A Wien-bridge oscillator around one op-amp: series R2 C2 from the output to the +input,
    R3 || C3 from there to the reference, non-inverting gain 1 + R4 / 10k (C4 only blocks DC).
    The stage input reaches the bridge through 10 MΩ, which barely loads it."""
    return stage_block("osc", "custom", "nodes: p n g a spare",
                       "part: R1 10M @ in p",
                       "part: R2 10k @ out a", "part: C2 10n @ a p",
                       "part: R3 10k @ p vref", "part: C3 10n @ p vref",
                       "part: U1A TL072 @ p n out vcc 0",
                       f"part: R4 {feedback} @ out n", "part: R5 10k @ n g",
                       "part: C4 100u @ g vref",
                       "part: U1B TL072 @ vref spare spare vcc 0")


def fuzz_text(pair: str) -> str:
    """The direct-coupled fuzz with a quick bypass and a Fuzz knob, PNP or NPN."""
    block = stage_block("fuzz", "direct-coupled-fuzz", "input-cap: C1 100n film",
                        f"input-transistor: Q1 {pair}", "input-collector: R1 33k",
                        f"output-transistor: Q2 {pair}", "output-collector: R2 8k2",
                        "output-emitter: R3 1k", "feedback: R4 100k", "output-cap: C3 100n",
                        "pulldown: R5 1M", "bypass-cap: C2 2u2 film", "gain: VR1 B1k")
    return guide_text(POWER, block, load="100k").replace("```\n", "knob: Fuzz = VR1\n```\n", 1)


def rest_state(kit) -> KitState:
    return KitState(kit, kit.rest_positions())


class TestWienBridge:
    # Wien-bridge oscillator (Sedra and Smith, Microelectronic Circuits, "The Wien-bridge
    # oscillator"; from memory): with the amplifier's gain A = 1 + R4/R5 the loop gain is
    # A / (3 + sRC + 1/(sRC)), so the closed loop's poles solve (sRC)^2 + (3 - A) sRC + 1 = 0.
    # They cross into the right half plane at A = 3 (the Barkhausen threshold), with
    # |s| = 1/(RC) and Re s = (A - 3) / (2RC).

    def test_below_the_threshold_gain_it_is_stable(self):
        assert unstable_at(rest_state(make_kit(POWER, wien("18k"), load="1M"))) is None  # A 2.8

    def test_above_it_a_pole_pair_grows_at_one_over_rc(self):
        found = unstable_at(rest_state(make_kit(POWER, wien("22k"), load="1M")))  # A = 3.2
        assert found is not None and found.oscillates and found.stage == "osc"
        assert found.hz == pytest.approx(1.0 / (2.0 * math.pi * R * C), rel=0.01)
        # the op-amp's finite gain and the 10 MΩ input lower the growth a little
        assert found.growth == pytest.approx((3.2 - 3.0) / (2.0 * R * C), rel=0.05)


def test_growing_keeps_right_half_plane_poles_only():
    # poles s = -1 / lambda: lambda 1 ms decays; -1 ms grows; a pole pair with a positive real
    # part grows; -1e-18 s is rounding (1.6e17 Hz, above the 1 GHz ceiling); 0 is no pole
    lambdas = np.array([[1e-3, -1e-3, -1e-4 + 1e-3j, -1e-18, 0.0]])
    assert growing(lambdas).tolist() == [[False, True, True, False, False]]


@pytest.fixture(scope="module")
def pnp_fuzz():
    guide = parse_guide("fuzz.md", fuzz_text("2N3906"))
    kit = build_circuit(guide)
    specs = derive_specs(guide, kit)
    return guide, kit, specs


def test_the_pnp_fuzz_oscillates_at_full_gain_only(pnp_fuzz):
    # the loop through the supply's diode and bulk cap: ngspice's transient never settles at
    # full gain (tests/stages/test_direct_coupled_fuzz.py), and settles at 90 %
    _, _, specs = pnp_fuzz
    unstable = {p.positions[0][1]: p.unstable for p in specs.knob_sweep}
    assert [pos for pos, u in unstable.items() if u is not None] == [1.0]
    assert unstable[1.0].oscillates and 300.0 < unstable[1.0].hz < 3000.0
    assert specs.unstable is None


def test_the_rule_names_the_stage_the_setting_and_the_frequency(pnp_fuzz):
    guide, kit, specs = pnp_fuzz
    found = [f for f in verify(guide, kit, specs).findings if f.rule == "stable"]
    assert len(found) == 1
    assert found[0].subject == "fuzz" and found[0].span.line == kit.stages[1].span.line
    assert "with Fuzz at 100 %" in found[0].message
    assert "oscillates near 1.08 kHz" in found[0].message


def test_the_npn_fuzz_is_stable_everywhere():
    guide = parse_guide("fuzz.md", fuzz_text("2N5088"))
    kit = build_circuit(guide)
    specs = derive_specs(guide, kit)
    assert not [f for f in verify(guide, kit, specs).findings if f.rule == "stable"]


def test_an_allow_line_accepts_it(pnp_fuzz):
    text = fuzz_text("2N3906").replace("kind: direct-coupled-fuzz",
                                       "kind: direct-coupled-fuzz\nallow: stable fuzz: a test")
    guide = parse_guide("fuzz.md", text)
    kit = build_circuit(guide)
    found = [f for f in verify(guide, kit, pnp_fuzz[2]).findings if f.rule == "stable"]
    assert [f.allowed for f in found] == ["a test"]


def test_the_terminal_and_the_json_show_no_figure_there(pnp_fuzz):
    _, _, specs = pnp_fuzz
    text = specs_to_text(specs).splitlines()
    full = next(line for line in text if "Fuzz at 100 %" in line)
    assert "not meaningful: the circuit oscillates near 1.08 kHz" in full
    assert " dB" not in full
    points = specs_to_json(specs)["gain_db_1khz_by_knob"]
    top = next(p for p in points if p["knobs"] == {"Fuzz": 1.0})
    assert top["gain_db"] is None and top["input_impedance_ohm_1khz"] is None
    assert top["unstable"]["oscillates"] and top["unstable"]["stage"] == "fuzz"
    assert all(p["unstable"] is None and p["gain_db"] for p in points if p is not top)
    curves = specs_to_json(specs)["response"]["curves"]
    assert [c["gain_db"] is None for c in curves] == [False] * 4 + [True]


def test_the_page_shows_no_figure_there(pnp_fuzz):
    _, _, specs = pnp_fuzz
    env = make_environment([packaged_theme()])
    html = env.from_string('{% with sp = specs %}{% include "_spec_rows.html" %}{% endwith %}'
                           ).render(specs=specs)
    row = next(r for r in html.split("<tr>") if "Fuzz at 100 %" in r)
    assert "not meaningful: the circuit oscillates near 1.08 kHz" in row and " dB" not in row


@pytest.mark.parametrize("path", sorted(DEMO_GUIDES.glob("*.md")), ids=lambda p: p.stem)
def test_no_demo_guide_setting_is_unstable(path):
    guide = parse_guide(str(path), path.read_text(encoding="utf-8"))
    solved = solve_kit(guide, build_circuit(guide))
    states = [solved.base, *(s for sweep in solved.sweeps.values() for s in sweep)]
    assert [unstable_at(s) for s in states] == [None] * len(states)


def test_a_claim_on_an_unstable_figure_cannot_hold(pnp_fuzz):
    _, _, specs = pnp_fuzz
    claim = "claim: gain.fuzz-100 above 60 dB"
    text = fuzz_text("2N3906").replace("kind: direct-coupled-fuzz",
                                       f"kind: direct-coupled-fuzz\n{claim}")
    guide = parse_guide("fuzz.md", text)
    kit = build_circuit(guide)
    with pytest.raises(SpecError, match="cannot hold: the figure is not meaningful: the circuit "
                                        "oscillates near 1.08 kHz") as caught:
        verify(guide, kit, specs)
    assert caught.value.span.line == text.splitlines().index(claim) + 1


def test_prose_shows_no_figure_there(pnp_fuzz):
    guide, kit, specs = pnp_fuzz
    values = computed_values(specs, kit)
    pieces = render_prose("At full gain it gives {=fuzz.gain.fuzz-100}.\n",
                          prose_env("fuzz.md", values))
    html = "".join(p.content for p in pieces if p.kind == "html")
    assert "not meaningful: the circuit oscillates near 1.08 kHz" in html and " dB" not in html
    assert values["fuzz.gain.fuzz-75"].unstable is None


def test_other_rules_do_not_judge_a_setting_that_oscillates(pnp_fuzz):
    # an oscillating setting's small-signal gain is whatever the linearisation gives; make it
    # absurd, and no rule but `stable` may read it (here pot-taper would see the whole change
    # in the last quarter turn)
    guide, kit, specs = pnp_fuzz
    fuzz = specs.stage("fuzz")
    sweep = tuple(replace(p, gain_db=Range(200.0)) if p.unstable is not None else p
                  for p in fuzz.knob_sweep)
    specs = replace(specs, stages=tuple(replace(s, knob_sweep=sweep) if s is fuzz else s
                                        for s in specs.stages))
    rules = {f.rule for f in verify(guide, kit, specs).findings}
    assert "stable" in rules and "pot-taper" not in rules
