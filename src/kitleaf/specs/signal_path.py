"""A signal stage whose output does not follow its input has no gain, corners or impedances.

A custom stage wired so that nothing joins its output to its input (the output taken from a
divider across the supply, say) leaves the output's AC voltage at zero, or at rounding: its
"gain" is rounding over the input, the next stage's is zero over zero, and a corner search
finds the noise. The check stops with one error at the stage's block before any figure is
computed, as the shorted-supply check does.
"""

from __future__ import annotations

import numpy as np

from kitleaf.circuit.kind import Stage
from kitleaf.errors import SpecError
from kitleaf.specs.response import FREQS

# Below this ratio of output to input (-240 dB) at every frequency of the band, the output is
# rounding: a real attenuator (a volume pot at its end, an open switch contact of 1 GΩ)
# passes at least a millionth of that.
FLOOR = 1e-12


def check_signal_path(kit, view) -> None:
    """SpecError at the first signal stage whose output stays below FLOOR times its input at
    every frequency of the plotted band, in ``view`` (the nominal build, knobs at rest)."""
    for stage in kit.signal_stages:
        node_in, node_out = kit.stage_nodes(stage.id)
        if view.batch.row(node_in) is None or view.batch.row(node_out) is None:
            continue  # a node on ground: the wiring checks say so
        level = np.abs(view.sweep.at(FREQS, [node_in, node_out])[0])
        if np.all(level[:, 1] <= FLOOR * level[:, 0]) and np.any(level[:, 0] > 0.0):
            raise SpecError(_message(stage), stage.span)


def _message(stage: Stage) -> str:
    return (f"stage '{stage.id}': its output does not follow its input (below -240 dB of it "
            f"at every frequency from 10 Hz to 40 kHz), so it has no gain, corners or "
            f"impedances to compute; join the stage's input to its output through its parts")
