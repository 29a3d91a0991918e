"""jfet-common-source: self bias and gain against the square-law hand analysis."""

from __future__ import annotations

import math

import pytest
from tests.stages.kits import dc_at, gain_at, make_kit, stage_block

from kitleaf.engine import get_model


def cs(transistor: str = "Q1 J201", *extra: str) -> str:
    return stage_block("amp", "jfet-common-source", "input-cap: C1 100n", "gate: R1 1M",
                       f"transistor: {transistor}", "drain: R2 6k8", "source: R3 1k",
                       "output-cap: C2 10u", *extra)


def square_law(model: str, rs: float) -> float:
    """Drain current of a self-biased JFET: ID = BETA (VGS - VTO)^2 with VGS = -ID RS
    (Sedra & Smith, Microelectronic Circuits, JFET biasing), solved as a quadratic."""
    m = get_model(model)
    beta, vto = m.get("BETA"), abs(m.get("VTO"))
    # ID = beta (vto - ID rs)^2  ->  beta rs^2 ID^2 - (2 beta vto rs + 1) ID + beta vto^2 = 0
    a, b, c = beta * rs * rs, -(2 * beta * vto * rs + 1), beta * vto * vto
    return (-b - math.sqrt(b * b - 4 * a * c)) / (2 * a)


def test_self_bias_matches_the_square_law():
    kit = make_kit(cs(), load="10M")
    assert dc_at(kit, "amp.s") == pytest.approx(square_law("J201", 1e3) * 1e3, rel=0.03)


def test_bypassed_gain_is_gm_rd():
    # gm = 2 sqrt(BETA ID); Av = -gm RD with the source bypassed (same source)
    kit = make_kit(cs("Q1 J201", "source-bypass: C3 1000u electrolytic"), load="10M")
    i_d = square_law("J201", 1e3)
    gm = 2 * math.sqrt(get_model("J201").get("BETA") * i_d)
    assert abs(gain_at(kit, 1e3)) == pytest.approx(gm * 6.8e3, rel=0.05)


def test_unbypassed_gain_is_degenerated():
    # Av = -gm RD / (1 + gm RS) (same source)
    kit = make_kit(cs(), load="10M")
    i_d = square_law("J201", 1e3)
    gm = 2 * math.sqrt(get_model("J201").get("BETA") * i_d)
    assert abs(gain_at(kit, 1e3)) == pytest.approx(gm * 6.8e3 / (1 + gm * 1e3), rel=0.05)


def test_p_channel_is_mirrored():
    kit = make_kit(cs("Q1 2N5460"), load="10M")
    assert 9.0 - dc_at(kit, "amp.s") == pytest.approx(square_law("2N5460", 1e3) * 1e3, rel=0.03)
    assert dc_at(kit, "amp.d") < dc_at(kit, "amp.s")
