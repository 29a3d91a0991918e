"""The shared shape of a device family: arrays of junctions, currents and capacitances."""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

import numpy as np

BOLTZMANN = 1.380649e-23
CHARGE = 1.602176634e-19
TEMPERATURE = 300.15  # 27 degC, the SPICE nominal temperature
VT = BOLTZMANN * TEMPERATURE / CHARGE
GMIN = 1e-12  # conductance across every junction, as SPICE adds (keeps off devices non-singular)
_EXP_CAP = 80.0


def explin(arg: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """exp(arg) and its derivative, continued linearly above exp(80) so nothing overflows."""
    capped = np.minimum(arg, _EXP_CAP)
    value = np.exp(capped)
    over = arg - capped
    return value * (1.0 + over), value


def breakdown(v: np.ndarray, bv: np.ndarray, ibv, n_vt) -> tuple[np.ndarray, np.ndarray]:
    """A junction's reverse breakdown current -ibv exp(-(v + bv) / n_vt) (the SPICE diode's
    form) and its slope; zero where ``bv`` is infinite (unset)."""
    finite = np.isfinite(bv)
    e, de = explin(np.where(finite, -(v + np.where(finite, bv, 0.0)) / n_vt, -1e3))
    return np.where(finite, -ibv * e, 0.0), np.where(finite, ibv * de / n_vt, 0.0)


def pnjlim(vnew: np.ndarray, vold: np.ndarray, vt: np.ndarray, vcrit: np.ndarray) -> np.ndarray:
    """SPICE's junction-voltage limiting: large forward steps become logarithmic."""
    big = (vnew > vcrit) & (np.abs(vnew - vold) > 2.0 * vt)
    if not big.any():
        return vnew
    arg = 1.0 + (vnew - vold) / vt
    from_on = np.where(arg > 0, vold + vt * np.log(np.maximum(arg, 1e-300)), vcrit)
    from_off = vt * np.log(np.maximum(vnew / vt, 1e-300))
    limited = np.where(vold > 0, from_on, from_off)
    return np.where(big, limited, vnew)


def breakdown_limit(vnew: np.ndarray, vold: np.ndarray, bv: np.ndarray, n_vt: np.ndarray,
                    crit: np.ndarray) -> np.ndarray:
    """SPICE's limiting of a junction stepping deep into reverse breakdown: the step below
    -bv is limited as a forward step of the mirrored junction would be (``bv`` infinite:
    nothing to limit)."""
    finite = np.isfinite(bv)
    deep = finite & (vnew < np.minimum(0.0, -np.where(finite, bv, 0.0) + 10.0 * n_vt))
    if not deep.any():
        return vnew
    bv = np.where(finite, bv, 0.0)
    mirrored = -(vnew + bv)
    limited = pnjlim(mirrored, -(vold + bv), n_vt, crit)
    return np.where(deep & (limited != mirrored), -(limited + bv), vnew)


def vcrit(n_vt: np.ndarray, i_sat: np.ndarray) -> np.ndarray:
    """The junction voltage above which steps are limited."""
    return n_vt * np.log(n_vt / (math.sqrt(2.0) * i_sat))


def depletion(v: np.ndarray, cj0: np.ndarray, vj: np.ndarray, m: np.ndarray,
              fc: np.ndarray) -> np.ndarray:
    """Junction depletion capacitance, linearly extended above fc*vj (the SPICE form)."""
    safe_v = np.minimum(v, fc * vj)
    below = cj0 * (1.0 - safe_v / vj) ** (-m)
    above = cj0 / (1.0 - fc) ** (1.0 + m) * (1.0 - fc * (1.0 + m) + m * v / vj)
    return np.where(v < fc * vj, below, above)


@dataclass
class Bank:
    """A family's devices as arrays: ``k`` junctions, ``t`` currents, ``c`` capacitances each.

    Junction j of device d is v[jp] - v[jn] times ``polarity`` (the device frame: an NPN and a
    PNP share equations). Term t is a current from row ``src`` through the device to ``dst``.
    Rows equal to the system size mean ground. ``params`` are (samples or 1, devices) arrays.
    """

    names: tuple[str, ...]
    polarity: np.ndarray
    params: dict[str, np.ndarray]
    jp: np.ndarray
    jn: np.ndarray
    src: np.ndarray
    dst: np.ndarray
    cap_a: np.ndarray
    cap_b: np.ndarray
    ext: np.ndarray  # rows of the external terminals (terminals, devices), for reports

    def junctions(self, xe: np.ndarray) -> np.ndarray:
        """Device-frame junction voltages (samples, k, devices) from extended node voltages."""
        return (xe[:, self.jp] - xe[:, self.jn]) * self.polarity

    def terminal_voltages(self, xe: np.ndarray) -> np.ndarray:
        """External terminal voltages of sample 0, shape (terminals, devices)."""
        return xe[0, self.ext]

    def with_params(self, **params: np.ndarray) -> Bank:
        return dataclasses.replace(self, params={**self.params, **params})

    def p(self, key: str) -> np.ndarray:
        return self.params[key]

    # Families override these four.
    def initial(self) -> np.ndarray:
        raise NotImplementedError

    def limit(self, vnew: np.ndarray, vold: np.ndarray) -> np.ndarray:
        raise NotImplementedError

    def evaluate(self, v: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Device-frame currents (samples, t, devices) and d current / d junction (s, t, k, d)."""
        raise NotImplementedError

    def capacitances(self, v: np.ndarray) -> np.ndarray:
        """Small-signal capacitances (samples, c, devices) at junction voltages ``v``."""
        raise NotImplementedError

    def report(self, v: np.ndarray, xe: np.ndarray, index: int) -> dict[str, float | str]:
        """Operating-point figures of device ``index`` (a single sample)."""
        raise NotImplementedError


def param_arrays(models: list, keys: tuple[str, ...]) -> dict[str, np.ndarray]:
    """Model parameters as (1, devices) arrays, defaults filled in."""
    return {k: np.array([[m.get(k) for m in models]], dtype=float) for k in keys}


def internal(name: str, terminal: str) -> str:
    """Name of a device's internal node (behind a series resistance)."""
    return f"{name}:{terminal}"


def internal_nodes(part, resistors: tuple[tuple[str, str], ...]) -> tuple[str, ...]:
    """The internal nodes of ``part``: one behind each terminal whose series resistance
    (``resistors``: (terminal, model key) pairs) is set."""
    return tuple(internal(part.name, t) for t, key in resistors if part.model.get(key) > 0)


def inner_row(part, terminal: str, key: str, st) -> int:
    """The row behind ``terminal``'s series resistance (model key ``key``), stamping that
    resistance; the terminal's own row when there is none."""
    outer = st.layout.row(getattr(part, terminal))
    if part.model.get(key) <= 0:
        return outer
    inner = st.layout.row(internal(part.name, terminal))
    st.conductance(None, outer, inner, 1.0 / part.model.get(key))
    return inner
