"""tone-stack: the passive three-knob stack against its published closed form and sympy."""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from tests.stages.kits import (
    CLIPPED_DRIVE,
    POWER,
    guide_text,
    make_kit,
    response,
    stage_block,
)
from tests.stages.spice_check import check_corners, check_knob_steps, check_scoops
from tests.stages.spice_oracle import RIPPLE, check_hum, check_large_signal
from tests.test_specs_figures import specs_of

from kitleaf.errors import CircuitError

# The component values of the worked example in D. T. Yeh and J. O. Smith III, Proc. 9th Int.
# Conf. on Digital Audio Effects (DAFx-06), Montreal, 2006, section 2: C1 250 pF, C2 = C3 20 nF,
# R1 250k (treble), R2 1M (bass), R3 25k (mid), R4 56k (slope). Linear pots, so each pot's
# share of its track is its rotation.
VALUES = dict(C1=250e-12, C2=20e-9, C3=20e-9, R1=250e3, R2=1e6, R3=25e3, R4=56e3)
STACK = stage_block("tone", "tone-stack", "treble-cap: C1 250p", "slope: R4 56k",
                    "treble: VR1 B250k", "bass-cap: C2 20n", "bass: VR2 B1M",
                    "mid-cap: C3 20n", "mid: VR3 B25k")
STEPS = (0.0, 0.25, 0.5, 0.75, 1.0)
FREQS = np.array([30.0, 100.0, 300.0, 1e3, 3e3, 10e3])


def published(t: float, m: float, low: float, s: np.ndarray, C1, C2, C3, R1, R2, R3, R4):
    """H(s) = (b1 s + b2 s^2 + b3 s^3) / (1 + a1 s + a2 s^2 + a3 s^3) of the stack unloaded
    and driven by an ideal source; t, m and low are the treble, mid and bass rotations.
    Yeh & Smith, DAFx-06, eq. (1) and the coefficients beside it (typed from the paper, from
    memory; test_the_published_coefficients_follow_from_nodal_analysis confirms them)."""
    b1 = t * C1 * R1 + m * C3 * R3 + low * (C1 * R2 + C2 * R2) + (C1 * R3 + C2 * R3)
    b2 = (t * (C1 * C2 * R1 * R4 + C1 * C3 * R1 * R4)
          - m * m * (C1 * C3 * R3 * R3 + C2 * C3 * R3 * R3)
          + m * (C1 * C3 * R1 * R3 + C1 * C3 * R3 * R3 + C2 * C3 * R3 * R3)
          + low * (C1 * C2 * R1 * R2 + C1 * C2 * R2 * R4 + C1 * C3 * R2 * R4)
          + low * m * (C1 * C3 * R2 * R3 + C2 * C3 * R2 * R3)
          + (C1 * C2 * R1 * R3 + C1 * C2 * R3 * R4 + C1 * C3 * R3 * R4))
    c123 = C1 * C2 * C3
    b3 = c123 * (low * m * (R1 * R2 * R3 + R2 * R3 * R4) - m * m * (R1 * R3 * R3 + R3 * R3 * R4)
                 + m * (R1 * R3 * R3 + R3 * R3 * R4) + t * R1 * R3 * R4 - t * m * R1 * R3 * R4
                 + t * low * R1 * R2 * R4)
    a1 = (C1 * R1 + C1 * R3 + C2 * R3 + C2 * R4 + C3 * R4) + m * C3 * R3 \
        + low * (C1 * R2 + C2 * R2)
    a2 = (m * (C1 * C3 * R1 * R3 - C2 * C3 * R3 * R4 + C1 * C3 * R3 * R3 + C2 * C3 * R3 * R3)
          + low * m * (C1 * C3 * R2 * R3 + C2 * C3 * R2 * R3)
          - m * m * (C1 * C3 * R3 * R3 + C2 * C3 * R3 * R3)
          + low * (C1 * C2 * R2 * R4 + C1 * C2 * R1 * R2 + C1 * C3 * R2 * R4 + C2 * C3 * R2 * R4)
          + (C1 * C2 * R1 * R4 + C1 * C3 * R1 * R4 + C1 * C2 * R3 * R4 + C1 * C2 * R1 * R3
             + C1 * C3 * R3 * R4 + C2 * C3 * R3 * R4))
    a3 = c123 * (low * m * (R1 * R2 * R3 + R2 * R3 * R4) - m * m * (R1 * R3 * R3 + R3 * R3 * R4)
                 + m * (R3 * R3 * R4 + R1 * R3 * R3 - R1 * R3 * R4) + low * R1 * R2 * R4
                 + R1 * R3 * R4)
    return (b1 * s + b2 * s ** 2 + b3 * s ** 3) / (1 + a1 * s + a2 * s ** 2 + a3 * s ** 3)


UNLOADED = make_kit(STACK, load="100G")  # practically unloaded, as the closed form assumes


@pytest.mark.parametrize("positions", list(itertools.product(STEPS, repeat=3)),
                         ids=lambda p: "t{}-m{}-b{}".format(*p))
def test_every_knob_position_follows_the_published_transfer_function(positions):
    t, m, low = positions
    got = response(UNLOADED, FREQS, {"VR1": t, "VR3": m, "VR2": low})
    want = published(t, m, low, 2j * np.pi * FREQS, **VALUES)
    # the engine's pots keep 1 ohm at each end of the track (kitleaf.engine.elements)
    assert np.abs(got - want) == pytest.approx(0.0, abs=2e-4 * np.abs(want).max())


def test_a_fixed_mid_resistor_is_the_mid_pot_turned_fully_up():
    fixed = STACK.replace("mid: VR3 B25k", "mid-resistor: R3 25k")
    got = response(make_kit(fixed, load="100G"), FREQS, {"VR1": 0.5, "VR2": 0.5})
    want = published(0.5, 1.0, 0.5, 2j * np.pi * FREQS, **VALUES)
    assert np.abs(got - want) == pytest.approx(0.0, abs=2e-4 * np.abs(want).max())


def test_each_knob_turns_its_own_band_up_clockwise():
    kit = make_kit(STACK)
    half = {"VR1": 0.5, "VR2": 0.5, "VR3": 0.5}
    for pot, hz in (("VR1", 8e3), ("VR3", 500.0), ("VR2", 40.0)):
        gains = [abs(response(kit, np.array([hz]), {**half, pot: p})[0]) for p in STEPS]
        assert gains == sorted(gains) and gains[-1] > 1.5 * gains[0], pot


def line_of(block: str, start: str) -> int:
    """The 1-based guide line of the first line of ``block`` that starts with ``start``."""
    lines = guide_text(block).splitlines()
    return 1 + next(i for i, line in enumerate(lines) if line.startswith(start))


def test_the_stack_needs_a_mid_control():
    text = STACK.replace("mid: VR3 B25k\n", "")
    with pytest.raises(CircuitError, match="no mid control") as caught:
        make_kit(text)
    assert caught.value.span.line == line_of(text, "```stage")


def test_a_mid_resistor_under_the_mid_pot_keeps_the_scoop_from_its_full_depth():
    limited = STACK.replace("mid: VR3 B25k", "mid: VR3 B25k\nmid-resistor: R5 10k")
    at = {"VR1": 0.5, "VR2": 0.5, "VR3": 0.0}
    scoop, floor = (abs(response(make_kit(text), np.array([500.0]), at)[0])
                    for text in (STACK, limited))
    # the mid pot fully down grounds the mid cap; 10k under it lifts 500 Hz by about 2 dB
    assert 20 * np.log10(floor / scoop) > 1.5


@pytest.mark.parametrize(("role", "line"), [("bass: R9 1M", "bass: VR2 B1M"),
                                            ("mid-cap: R9 20k", "mid-cap: C3 20n"),
                                            ("treble: C9 250p", "treble: VR1 B250k")])
def test_a_part_of_the_wrong_type_is_refused_at_its_line(role, line):
    text = STACK.replace(line, role)
    with pytest.raises(CircuitError, match=role.split(":")[0]) as caught:
        make_kit(text)
    assert caught.value.span.line == line_of(text, role)


@pytest.mark.slow
def test_the_published_coefficients_follow_from_nodal_analysis():
    """Our own derivation: the node equations of the stack, solved by Cramer's rule in sympy
    (no part of kitleaf), give the same rational function as the published coefficients."""
    import sympy as sp  # a test dependency (pyproject: test), heavy to import
    s, t, m, low = sp.symbols("s t m low")
    names = sp.symbols("C1 C2 C3 R1 R2 R3 R4", positive=True)
    C1, C2, C3, R1, R2, R3, R4 = names
    # (node, node, admittance); 'in' is driven with 1 V, '0' is ground; the mid pot's top
    # (cw) joins the bass pot, its wiper the mid cap
    branches = [("in", "T", s * C1), ("T", "W", 1 / ((1 - t) * R1)), ("W", "B", 1 / (t * R1)),
                ("in", "A", 1 / R4), ("A", "B", s * C2), ("B", "M", 1 / (low * R2)),
                ("M", "X", 1 / ((1 - m) * R3)), ("A", "X", s * C3), ("X", "0", 1 / (m * R3))]
    nodes = ["T", "W", "B", "A", "M", "X"]
    g, drive = sp.zeros(6, 6), sp.zeros(6, 1)
    for a, b, y in branches:
        for p, q in ((a, b), (b, a)):
            if p in nodes:
                g[nodes.index(p), nodes.index(p)] += y
                if q in nodes:
                    g[nodes.index(p), nodes.index(q)] -= y
                elif q == "in":
                    drive[nodes.index(p)] += y
    with_drive = g.copy()
    with_drive[:, nodes.index("W")] = drive
    derived = with_drive.det(method="berkowitz") / g.det(method="berkowitz")
    h = published(t, m, low, s, *names)
    assert sp.cancel(sp.together(derived - h)) == 0


# A stack of our own: log treble and bass pots, driven through 4k7 (a transistor stage's
# output), into the usual 1 MΩ amplifier input.
FERN_STACK = stage_block("tone", "tone-stack", "treble-cap: C20 220p", "slope: R20 47k",
                         "treble: VR3 A250k", "bass-cap: C21 22n", "bass: VR4 A1M",
                         "mid-cap: C22 22n", "mid: VR5 B25k")
FERN_KNOBS = ("Treble = VR3", "Bass = VR4", "Mid = VR5")


@pytest.mark.slow
def test_gain_and_impedances_at_every_knob_step_agree_with_ngspice():
    kit, specs = specs_of(POWER, FERN_STACK, knobs=FERN_KNOBS, source="4k7")
    check_knob_steps(kit, specs.stage("tone"))


@pytest.mark.slow
def test_the_hum_behind_a_drive_at_every_knob_step_agrees_with_ngspice():
    # alone, a passive stack has no path from the supply; behind a drive it shapes the
    # ripple the drive's reference carries
    kit, specs = specs_of(POWER, CLIPPED_DRIVE, FERN_STACK, knobs=("Drive = VR1", *FERN_KNOBS),
                          load="1M", lines=(RIPPLE,))
    assert specs.hum.nominal > 1e-6
    check_hum(kit, specs)


@pytest.mark.slow
def test_corners_agree_with_ngspice():
    kit, specs = specs_of(POWER, FERN_STACK, knobs=FERN_KNOBS, source="4k7")
    check_corners(kit, specs.stage("tone"))


@pytest.mark.slow
def test_the_mid_scoop_at_every_knob_step_agrees_with_ngspice():
    kit, specs = specs_of(POWER, FERN_STACK, knobs=FERN_KNOBS, source="4k7")
    check_scoops(kit, specs.stage("tone"))


def test_its_table_gives_the_mid_scoop_in_place_of_corners():
    # a stack has no flat band: its -3 dB points only mark where the bass or treble hump
    # falls off, no corner a reader can use; its scoop is what it is chosen for (common
    # practice, no source)
    from kitleaf.render.environment import make_environment, theme_dirs
    from kitleaf.render.specs_text import specs_to_text

    boost = stage_block("boost", "common-emitter", "input-cap: C1 100n film",
                        "bias-top: R1 470k", "bias-bottom: R2 100k", "transistor: Q1 2N5089",
                        "collector: R3 4k7", "emitter: R4 470", "output-cap: C2 1u film",
                        "pulldown: R5 1M")
    _, specs = specs_of(POWER, boost, FERN_STACK, knobs=FERN_KNOBS, source="4k7")
    rows = make_environment(theme_dirs(None)).get_template("_spec_rows.html")
    tone = rows.render(sp=specs.stage("tone"), specs=specs)
    assert "Mid scoop" in tone and "Corners (−3 dB)" in tone
    assert "Low corner" not in tone and "High corner" not in tone
    assert "Low corner (−3 dB)" in rows.render(sp=specs.stage("boost"), specs=specs)
    text = specs_to_text(specs).split("stage tone")[1]
    assert "mid scoop" in text and "low corner" not in text and "corners          none" in text
    # the stack shapes the whole kit's response too: the kit's table and summary say so
    whole = rows.render(sp=specs, specs=specs)
    assert "Mid scoop" in whole and "Low corner" not in whole and not specs.passband
    assert specs.scoop is not None and specs.scoop.depth_db.nominal > 1.0
    head = specs_to_text(specs).split("stage ")[0]
    assert "  mid scoop" in head and "low corner" not in head
    assert "  corners            none" in head
    assert "Low corner (−3 dB)" in rows.render(sp=specs_of(POWER, boost, source="4k7")[1],
                                               specs=specs)


# The spike a hard-clipped edge leaves through a treble path (some 10 us wide, full treble)
# falls between the period's fixed steps: the engine steps its top again finely
# (engine/extremes.py). The full-treble stack at 300 mV peaks at 0.6042 V in ngspice.
@pytest.mark.slow
@pytest.mark.parametrize("setting", [0.0, 0.5, 1.0])
def test_a_clipped_wave_through_the_stack_agrees_with_ngspice(setting):
    # A passive stack adds no harmonics of its own: fed by a clipping drive at full gain,
    # each knob setting weighs the drive's harmonics its own way (treble and mid with the
    # setting, bass against it). Two of the playing levels, 100 and 300 mV peak.
    kit = make_kit(POWER, CLIPPED_DRIVE, FERN_STACK, load="100k")
    positions = {"VR1": 1.0, "VR3": setting, "VR4": 1.0 - setting, "VR5": setting}
    check_large_signal(kit, positions, "output", (0.1, 0.3))
