"""Whether a kit setting is stable: the poles of its small-signal circuit, nominal parts.

The specs read every setting through its pole-residue form (each mode 1 / (1 + s lambda), a
pole at s = -1 / lambda). A pole in the right half plane is a mode that grows instead of
decaying: the circuit oscillates (a pole pair) or runs to a rail (a real pole) on its own, and
the small-signal gain, corners and impedances of that setting describe an operating point the
circuit never stays at. A feedback loop is unstable exactly when its closed loop has such a
pole (Nyquist's criterion; Sedra and Smith, Microelectronic Circuits, the chapter on feedback
stability, from memory).
"""

from __future__ import annotations

import numpy as np

from kitleaf.engine import PoleResidue, growing
from kitleaf.specs.model import Unstable
from kitleaf.specs.solve import KitState, View


def unstable_at(state: KitState) -> Unstable | None:
    """:func:`instability` of the state's nominal build, worked out once per state."""
    ids = frozenset(s.id for s in state.kit.stages)
    return state.nominal.once(("unstable",), lambda: instability(state.nominal, ids))


def instability(view: View, stage_ids: frozenset[str]) -> Unstable | None:
    """The nominal build's fastest-growing mode at this setting, None when every mode decays;
    its stage is the one of ``stage_ids`` whose node swings most in that mode."""
    form = view.sweep.modal.form
    if not isinstance(form, PoleResidue):  # a large kit's, block by block: not the kit's modes
        form = view.batch.modal(view.sweep.rhs).form
    lambdas = form.lambdas[0]
    grows = np.flatnonzero(growing(form.lambdas)[0])
    if grows.size == 0:
        return None
    poles = -1.0 / lambdas[grows].astype(complex)
    k = int(np.argmax(poles.real))
    pole = poles[k]
    shape = np.abs(form.mode_shape(0, int(grows[k])))
    return Unstable(hz=float(abs(pole) / (2.0 * np.pi)), growth=float(pole.real),
                    oscillates=bool(abs(pole.imag) > 1e-9 * abs(pole)),
                    stage=_strongest(view.batch.system.layout.nodes, shape, stage_ids))


def _strongest(nodes, shape: np.ndarray, stage_ids: frozenset[str]) -> str:
    """The stage owning the node of largest amplitude (a stage's nodes are named
    ``STAGE.NODE``); "" when no such node moves."""
    owners = [n.partition(".")[0] if n.partition(".")[0] in stage_ids else "" for n in nodes]
    ranked = sorted(((-float(a), i) for i, a in enumerate(shape[:len(nodes)]) if owners[i]))
    return owners[ranked[0][1]] if ranked and ranked[0][0] < 0.0 else ""
