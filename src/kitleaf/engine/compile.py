"""Compiles a Circuit into MNA stamp patterns: node rows, branch rows, value columns."""

from __future__ import annotations

import weakref
from dataclasses import dataclass
from functools import cached_property

import numpy as np
import scipy.sparse as sp

from kitleaf.engine import elements as el
from kitleaf.engine.devices import FAMILIES, Family
from kitleaf.engine.nonlinear import Devices
from kitleaf.engine.sparse_stack import SparseStack
from kitleaf.engine.stamps import Columns, Pattern, StampMap, VectorPattern, apply
from kitleaf.engine.topology import check_topology
from kitleaf.errors import SolveError


@dataclass(frozen=True)
class Layout:
    """Unknowns of the MNA system: node voltages, then branch currents. Ground is row ``size``."""

    nodes: tuple[str, ...]
    branches: tuple[str, ...]

    @property
    def size(self) -> int:
        return len(self.nodes) + len(self.branches)

    def row(self, node: str) -> int:
        if node == el.GROUND:
            return self.size
        return self._rows[node]

    def branch(self, name: str) -> int:
        return len(self.nodes) + self.branches.index(name)

    def __post_init__(self) -> None:
        object.__setattr__(self, "_rows", {n: i for i, n in enumerate(self.nodes)})


class Stamper:
    """Collects linear stamps (G, C, source vector) while elements compile."""

    def __init__(self, layout: Layout, owners: dict[str, int],
                 upper_legs: dict[str, int] | None = None) -> None:
        self.layout, self.owners = layout, owners
        self.upper_legs = upper_legs or {}  # pot -> its upper leg's factor column
        size = layout.size
        self.g_cols, self.g_pat = Columns(), Pattern(size)
        self.c_cols, self.c_pat = Columns(), Pattern(size)
        self.c_terminals: list[tuple[int, int, float]] = []  # (a, b, sign) per C column
        self.b_cols, self.b_pat = Columns(), VectorPattern(size)
        self.source_cols: dict[str, int] = {}

    def conductance(self, owner: str | None, a: int, b: int, siemens: float,
                    column: int | None = None) -> None:
        """A resistor; with an owner, its value scales with the owner's tolerance factor (or
        with factor ``column``, a pot's upper leg)."""
        power = -1 if owner else 0
        col = self.g_cols.add(siemens, self.owners.get(owner, -1) if column is None else column,
                              power)
        self.g_pat.conductance(col, a, b)

    def transconductance(self, src: int, dst: int, cp: int, cn: int, siemens: float) -> None:
        self.g_pat.transconductance(self.g_cols.add(siemens), src, dst, cp, cn)

    def capacitance(self, owner: str | None, a: int, b: int, farads: float) -> None:
        col = self.c_cols.add(farads, self.owners.get(owner, -1), 1 if owner else 0)
        self.c_pat.conductance(col, a, b)
        self.c_terminals.append((a, b, 1.0))

    def branch(self, row: int, p: int, n: int) -> None:
        """A branch current through row ``row`` from p to n; its row reads v_p - v_n."""
        one = self.g_cols.add(1.0)
        for i, j, sign in ((p, row, 1.0), (n, row, -1.0), (row, p, 1.0), (row, n, -1.0)):
            self.g_pat.entry(one, i, j, sign)

    def inductance(self, owner: str, row: int, henries: float) -> None:
        col = self.c_cols.add(henries, self.owners[owner], 1)
        self.c_pat.entry(col, row, row, -1.0)
        self.c_terminals.append((row, self.layout.size, -1.0))

    def source(self, name: str, rows: tuple[tuple[int, float], ...], dc: float) -> None:
        """An independent source: ``dc`` enters the right-hand side at ``rows`` with signs."""
        col = self.b_cols.add(dc)
        self.source_cols[name] = col
        for row, sign in rows:
            self.b_pat.entry(col, row, sign)


@dataclass
class System:
    """A compiled circuit: layout, linear stamp patterns and device families."""

    layout: Layout
    elements: tuple[el.Element, ...]
    owners: dict[str, int]
    stamper: Stamper
    families: list[Family]

    @cached_property
    def devices(self) -> Devices:
        """The nominal device banks with their stamp maps (built once)."""
        return Devices(self.families, self.layout.size)

    @cached_property
    def _patterns(self) -> tuple[StampMap, StampMap, StampMap]:
        st = self.stamper
        return (st.g_pat.matrix(len(st.g_cols.nominal)), st.c_pat.matrix(len(st.c_cols.nominal)),
                st.b_pat.matrix(len(st.b_cols.nominal)))

    @property
    def stamp_maps(self) -> tuple[StampMap, StampMap]:
        """G's and C's stamp maps, from value columns to the flattened n x n matrices."""
        return self._patterns[0], self._patterns[1]

    @property
    def factor_count(self) -> int:
        """Columns of a batch's part factors: one per element, then one per pot's upper leg."""
        return len(self.elements) + len(self.stamper.upper_legs)

    def full_factors(self, factors: np.ndarray) -> np.ndarray:
        """``factors`` with a column per pot's upper leg: given one per element, each pot's
        upper leg takes its own column (the whole track scaled alike)."""
        if factors.shape[1] == self.factor_count:
            return factors
        if factors.shape[1] != len(self.elements):
            raise SolveError(f"part factors need {len(self.elements)} or {self.factor_count} "
                             f"columns (elements, then pots' upper legs), got {factors.shape[1]}")
        pots = [self.owners[name] for name in self.stamper.upper_legs]
        return np.concatenate([factors, factors[:, pots]], axis=1)

    def matrices(self, factors: np.ndarray | None = None) -> tuple[np.ndarray, np.ndarray]:
        """Batched linear G and C, shape (samples, n, n); ``factors`` scales toleranced parts."""
        st, n = self.stamper, self.layout.size
        return self.conductances(factors), apply(st.c_cols.values(factors), self._patterns[1],
                                                 (n, n))

    def conductances(self, factors: np.ndarray | None = None) -> np.ndarray:
        """Batched linear G alone (the DC problem has no use for C)."""
        n = self.layout.size
        return apply(self.stamper.g_cols.values(factors), self._patterns[0], (n, n))

    def sparse_conductances(self, factors: np.ndarray | None = None) -> SparseStack:
        """G as :meth:`conductances`, held as values on the entries that G, the devices'
        Jacobian and the diagonal can fill (a large circuit's DC problem)."""
        entries, g_onto, slopes = self._sparse_structure
        n = self.layout.size
        values = np.asarray(g_onto @ self.stamper.g_cols.values(factors).T).T
        return SparseStack(entries // n, entries % n, values, n, slopes)

    @cached_property
    def _sparse_structure(self) -> tuple[np.ndarray, sp.csr_matrix, sp.csr_matrix]:
        n, g_map = self.layout.size, self._patterns[0]
        entries = np.union1d(np.union1d(g_map.entries(), self.devices.jacobian_map.entries()),
                             np.arange(n) * (n + 1))
        return entries, g_map.onto(entries), self.devices.jacobian_map.onto(entries)

    def cap_columns(self, factors: np.ndarray | None = None) -> tuple[np.ndarray, np.ndarray]:
        """C as A diag(d) A^T: incidence A (n, m) and values d (samples, m)."""
        terminals = self.stamper.c_terminals
        values = self.stamper.c_cols.values(factors) * np.array([t[2] for t in terminals])
        return incidence(self.layout.size, [(a, b) for a, b, _ in terminals]), values

    def rhs(self, only: str | None = None, amplitude: float = 1.0) -> np.ndarray:
        """DC source vector (1, n); with ``only``, that source alone at ``amplitude``."""
        st = self.stamper
        values = np.asarray(st.b_cols.values())
        if only is not None:
            values = np.zeros_like(values)
            values[0, st.source_cols[only]] = amplitude
        return apply(values, self._patterns[2], (self.layout.size,))


def incidence(size: int, pairs: list[tuple[int, int]]) -> np.ndarray:
    """Columns +1 at a, -1 at b (ground rows dropped), shape (size, len(pairs))."""
    out = np.zeros((size + 1, len(pairs)))
    for col, (a, b) in enumerate(pairs):
        out[a, col] += 1.0
        out[b, col] -= 1.0
    return out[:size]


# Each circuit's last compiled system, with the elements it was compiled from: a circuit's
# DC, AC and Monte Carlo runs then share one system (its stamp maps, partition and device
# maps built once). Elements are frozen, and the entry holds them, so a circuit whose
# elements are all the very same objects (``is``) compiles to the same system.
_COMPILED: weakref.WeakKeyDictionary = weakref.WeakKeyDictionary()


def compile_circuit(circuit) -> System:
    """Check the topology, lay out the unknowns and stamp every element; a circuit compiled
    before with the same elements gets its system back."""
    elements = circuit.elements
    try:
        known = _COMPILED.get(circuit)
    except TypeError:  # a circuit-like object without weak references: no cache
        return _compile(circuit, elements)
    if known is not None and len(known[0]) == len(elements) and all(
            a is b for a, b in zip(known[0], elements, strict=True)):
        return known[1]
    system = _compile(circuit, elements)
    _COMPILED[circuit] = (elements, system)
    return system


def _compile(circuit, elements: tuple) -> System:
    if not elements:
        raise SolveError("the circuit is empty")
    check_topology(elements)
    layout = _layout(circuit, elements)
    owners = {e.name: i for i, e in enumerate(elements)}
    stamper = Stamper(layout, owners, el.upper_leg_columns(elements))
    for element in elements:
        _LINEAR.get(type(element), _skip)(stamper, element)
    families = [fam.build([e for e in elements if isinstance(e, fam.element_type)], stamper)
                for fam in FAMILIES if any(isinstance(e, fam.element_type) for e in elements)]
    return System(layout, elements, owners, stamper, families)


def _layout(circuit, elements: tuple[el.Element, ...]) -> Layout:
    internal = [n for e in elements for fam in FAMILIES if isinstance(e, fam.element_type)
                for n in fam.internal_nodes(e)]
    branches = tuple(e.name for e in elements if isinstance(e, BRANCHES))
    return Layout(circuit.nodes() + tuple(internal), branches)


# Elements whose current is an unknown of its own (a row of the MNA system).
BRANCHES = (el.VSource, el.Inductor, el.Pump)


def _skip(stamper: Stamper, element: el.Element) -> None:
    """Devices stamp themselves through their family."""


def _resistor(st: Stamper, e: el.Resistor) -> None:
    st.conductance(e.name, st.layout.row(e.a), st.layout.row(e.b), 1.0 / e.value)


def _pot(st: Stamper, e: el.Pot) -> None:
    lower, upper = e.legs()
    row = st.layout.row
    st.conductance(e.name, row(e.ccw), row(e.w), 1.0 / lower)
    st.conductance(e.name, row(e.w), row(e.cw), 1.0 / upper, column=st.upper_legs[e.name])


def _capacitor(st: Stamper, e: el.Capacitor) -> None:
    st.capacitance(e.name, st.layout.row(e.a), st.layout.row(e.b), e.value)


def _inductor(st: Stamper, e: el.Inductor) -> None:
    k = st.layout.branch(e.name)
    st.branch(k, st.layout.row(e.a), st.layout.row(e.b))
    st.inductance(e.name, k, e.value)


def _vsource(st: Stamper, e: el.VSource) -> None:
    k = st.layout.branch(e.name)
    st.branch(k, st.layout.row(e.p), st.layout.row(e.n))
    st.source(e.name, ((k, 1.0),), e.dc)


def _pump(st: Stamper, e: el.Pump) -> None:
    """Branch k (current into ``out``): KCL draws ratio x the delivered current from ``inp``
    and the balance from ``ref``; the row is v_out - v_ref - ratio (v_inp - v_ref) - rout i."""
    k, row = st.layout.branch(e.name), st.layout.row
    out, inp, ref = row(e.out), row(e.inp), row(e.ref)
    entries = ((out, k, 1.0), (inp, k, -e.ratio), (ref, k, e.ratio - 1.0), (k, out, 1.0),
               (k, ref, e.ratio - 1.0), (k, inp, -e.ratio), (k, k, -e.rout))
    for i, j, value in entries:
        st.g_pat.entry(st.g_cols.add(value), i, j)


def _isource(st: Stamper, e: el.ISource) -> None:
    rows = ((st.layout.row(e.p), -1.0), (st.layout.row(e.n), 1.0))
    st.source(e.name, rows, e.dc)


_LINEAR = {
    el.Resistor: _resistor, el.Pot: _pot, el.Capacitor: _capacitor, el.Inductor: _inductor,
    el.VSource: _vsource, el.ISource: _isource, el.Pump: _pump,
}
