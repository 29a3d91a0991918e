"""tone-blend: a low-pass and a high-pass path faded by one pot, against its node equations."""

from __future__ import annotations

from pathlib import Path

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

from kitleaf.display import range_text
from kitleaf.errors import CircuitError
from kitleaf.render.specs_text import specs_to_text
from kitleaf.specs.lookup import computed_values

BLEND = stage_block("tone", "tone-blend", "low-resistor: R1 39k", "low-cap: C1 10n",
                    "high-cap: C2 4n7", "high-resistor: R2 22k", "tone: VR1 B100k")
# The blend renumbered to follow the drive the large-signal and hum checks feed it from.
BLENDED = BLEND.replace("R1 39k", "R11 39k").replace("C1 10n", "C11 10n").replace(
    "C2 4n7", "C12 4n7").replace("R2 22k", "R12 22k").replace("VR1 B100k", "VR6 B100k")
STEPS = (0.0, 0.25, 0.5, 0.75, 1.0)
FREQS = np.array([30.0, 100.0, 300.0, 1e3, 3e3, 10e3])
LOAD = 1e6  # the kit's default load


def node_equations(p: float, s: np.ndarray, r1=39e3, c1=10e-9, c2=4.7e-9, r2=22e3, pot=100e3,
                   load=LOAD) -> np.ndarray:
    """Our own derivation (Kirchhoff's current law at the three nodes, written by hand, solved
    with numpy): the low-pass node L, the high-pass node H and the wiper W, driven by 1 V.

        (1 - L) / R1 = L s C1 + (L - W) / Ra
        (1 - H) s C2 = H / R2 + (H - W) / Rb
        (L - W) / Ra + (H - W) / Rb = W / Rload

    Ra and Rb are the linear pot's track on either side of the wiper, each at least 1 Ω (the
    end leg of kitleaf's pot model, so the ends of the rotation stay finite)."""
    ga, gb = 1 / max(p * pot, 1.0), 1 / max((1 - p) * pot, 1.0)
    out = []
    for x in s:
        a = np.array([[1 / r1 + x * c1 + ga, 0, -ga],
                      [0, x * c2 + 1 / r2 + gb, -gb],
                      [-ga, -gb, ga + gb + 1 / load]])
        out.append(np.linalg.solve(a, np.array([1 / r1, x * c2, 0]))[2])
    return np.array(out)


@pytest.mark.parametrize("position", STEPS)
def test_every_knob_position_follows_the_node_equations(position):
    got = response(make_kit(BLEND), FREQS, {"VR1": position})
    want = node_equations(position, 2j * np.pi * FREQS)
    assert np.abs(got - want) == pytest.approx(0.0, abs=1e-4 * np.abs(want).max())


def test_clockwise_fades_from_the_low_pass_to_the_high_pass():
    kit = make_kit(BLEND)
    lows = [abs(response(kit, np.array([60.0]), {"VR1": p})[0]) for p in STEPS]
    highs = [abs(response(kit, np.array([8e3]), {"VR1": p})[0]) for p in STEPS]
    assert lows == sorted(lows, reverse=True) and highs == sorted(highs)
    # fully ccw, 60 Hz passes the low-pass as a divider: 39k over the pot and 22k in series,
    # in parallel with the 1 MΩ load (Horowitz & Hill 3e, 1.2.3 and 1.2.5)
    shunt = 1 / (1 / 122e3 + 1 / LOAD)
    assert lows[0] == pytest.approx(shunt / (shunt + 39e3), rel=0.01)
    assert highs[-1] > 0.7 > highs[0]


def test_half_way_scoops_the_middle():
    freqs = np.geomspace(20.0, 20e3, 61)
    db = 20 * np.log10(np.abs(response(make_kit(BLEND), freqs, {"VR1": 0.5})))
    dip = int(np.argmin(db))
    assert 0 < dip < freqs.size - 1 and min(db[0], db[-1]) - db[dip] > 3.0


def test_the_half_way_scoop_lies_between_the_two_rc_corners_and_is_named():
    # the low-pass corner 1 / (2 pi 39k 10n) = 408 Hz, the high-pass 1 / (2 pi 22k 4n7) =
    # 1.54 kHz (first-order RC, Horowitz & Hill 3e, 1.7.1): the paths cross between them
    kit, specs = specs_of(POWER, BLEND, knobs=("Tone = VR1",))
    scoop = specs.stage("tone").scoop
    assert 408.0 < scoop.hz.nominal < 1540.0 and scoop.depth_db.nominal > 3.0
    names = computed_values(specs, kit)
    assert names["tone.scoop-depth"].value == scoop.depth_db
    assert names["tone.scoop-frequency.tone-50"].value.nominal == pytest.approx(
        scoop.hz.nominal)
    assert "tone.scoop-depth.tone-0" not in names  # fully dark, the response never dips
    # `kitleaf specs` prints it under the stage
    assert f"mid scoop        {range_text(scoop.depth_db, 'db')} at" in specs_to_text(specs)


def test_a_part_of_the_wrong_type_is_refused_at_its_line():
    text = BLEND.replace("tone: VR1 B100k", "tone: R9 100k")
    with pytest.raises(CircuitError, match="'tone'") as caught:
        make_kit(text)
    lines = guide_text(text).splitlines()
    assert caught.value.span.line == 1 + lines.index("tone: R9 100k")


# Our own values (above), driven through 4k7 into the usual 1 MΩ amplifier input.
@pytest.mark.slow
def test_gain_and_impedances_at_every_knob_step_agree_with_ngspice():
    kit, specs = specs_of(POWER, BLEND, knobs=("Tone = VR1",), source="4k7")
    check_knob_steps(kit, specs.stage("tone"))


@pytest.mark.slow
def test_the_hum_behind_a_drive_at_every_knob_step_agrees_with_ngspice():
    # alone, a passive blend has no path from the supply; behind a drive it shapes the
    # ripple the drive's reference carries
    kit, specs = specs_of(POWER, CLIPPED_DRIVE, BLENDED, knobs=("Drive = VR1", "Tone = VR6"),
                          load="1M", lines=(RIPPLE,))
    assert specs.hum.nominal > 1e-6
    check_hum(kit, specs)


@pytest.mark.slow
def test_corners_agree_with_ngspice():
    kit, specs = specs_of(POWER, BLEND, knobs=("Tone = VR1",), source="4k7")
    check_corners(kit, specs.stage("tone"))


@pytest.mark.slow
def test_the_mid_scoop_at_every_knob_step_agrees_with_ngspice():
    kit, specs = specs_of(POWER, BLEND, knobs=("Tone = VR1",), source="4k7")
    check_scoops(kit, specs.stage("tone"))


def test_the_page_and_the_plot_show_the_scoop(tmp_path):
    from kitleaf.site.guide_output import process_guide

    theme = Path(__file__).resolve().parents[2] / "themes" / "default"
    guide = tmp_path / "blend.md"
    guide.write_text(guide_text(POWER, BLEND).replace("```\n", "knob: Tone = VR1\n```\n", 1),
                     encoding="utf-8")
    files = dict(process_guide(guide, [theme]).files)
    page = next(v for k, v in files.items() if k.endswith("index.html")).decode()
    plot = next(v for k, v in files.items() if k.endswith("tone-response.svg")).decode()
    assert "Mid scoop (deepest dip)" in page and "Tone at 75 %" in page
    assert "scoop " in plot and "−3 dB" not in plot  # the scoop marked instead of corners
    # the blend leaves the whole kit no flat band either: its plot and caption say the same
    whole = files[next(k for k in files if k.endswith("/response.svg"))].decode()
    assert "scoop " in whole and "−3 dB" not in whole
    assert "the dotted vertical marks the mid scoop" in page and "−3 dB corners" not in page


# The spike a hard-clipped edge leaves through the high-pass path (some 10 us wide) falls
# between the period's fixed steps: the engine steps its top again finely
# (engine/extremes.py).
@pytest.mark.slow
@pytest.mark.parametrize("setting", [0.0, 0.5, 1.0])
def test_a_clipped_wave_through_the_blend_agrees_with_ngspice(setting):
    # A passive blend adds no harmonics of its own: fed by a clipping drive at full gain,
    # the low-pass end, the scoop and the high-pass end each weigh the drive's harmonics
    # their own way. Two of the playing levels, 100 and 300 mV peak.
    kit = make_kit(POWER, CLIPPED_DRIVE, BLENDED, load="100k")
    check_large_signal(kit, {"VR1": 1.0, "VR6": setting}, "output", (0.1, 0.3))
