"""high-pass and low-pass: the corner against 1 / (2 pi R C)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from tests.stages.kits import make_kit, stage_block

from kitleaf.engine import corners, solve_ac, solve_dc


def corner(kit, side: int) -> float:
    circuit = kit.netlist()
    ac = solve_ac(circuit, solve_dc(circuit), np.geomspace(1, 1e6, 400), source="VIN")
    found = corners(ac, "output")[side]
    assert found is not None
    return found


def test_high_pass_corner():
    # f = 1 / (2 pi R C) (Horowitz & Hill, The Art of Electronics 3e, 1.7.1); 10 M load
    kit = make_kit(stage_block("hp", "high-pass", "series-cap: C1 10n", "shunt-resistor: R1 100k"),
                   load="10M")
    r = 1 / (1 / 100e3 + 1 / 10e6)
    assert corner(kit, 0) == pytest.approx(1 / (2 * math.pi * (r + 100) * 10e-9), rel=0.01)


def test_low_pass_corner():
    # the 100 ohm low-z source is in series with R
    kit = make_kit(stage_block("lp", "low-pass", "series-resistor: R1 10k", "shunt-cap: C1 10n"),
                   load="10M")
    assert corner(kit, 1) == pytest.approx(1 / (2 * math.pi * 10.1e3 * 10e-9), rel=0.01)
