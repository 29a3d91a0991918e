"""A large circuit's response block by block, against the direct solve of the whole circuit.

The batch's direct AC solve (checked against the single-circuit solver in test_sparse_ac,
and that against hand analysis and ngspice in test_linear and test_ngspice_oracle) is the
reference: joined at its joints, the blocks' pole-residue forms must give every node of every
sample, from far below the band to far above it.
"""

import re

import numpy as np
import pytest
from tests.engine.test_sparse_ac import STAGES, boost_chain

from kitleaf.engine import Circuit, solve_batch
from kitleaf.engine.blocks import BlockResponse
from kitleaf.engine.joint_lu import JointLu

FREQS = np.array([0.1, 3.0, 100.0, 1000.0, 40e3, 1e6, 1e7])
JOINTS = tuple(f"out{k}" for k in range(STAGES + 1)) + ("vcc",)


@pytest.fixture(scope="module")
def batch():
    return solve_batch(boost_chain(), samples=40, seed=3)


def test_every_node_of_every_sample_equals_the_direct_solve(batch):
    rhs = batch.excitation("VIN")
    form = batch.response(rhs, joints=JOINTS)
    assert isinstance(form, BlockResponse)
    nodes = list(range(len(batch.layout.nodes)))
    direct = batch.solve_ac(FREQS, rhs)[:, :, nodes]
    scale = np.max(np.abs(direct), axis=2, keepdims=True)
    np.testing.assert_allclose(np.abs(form(FREQS, nodes) - direct) / scale, 0.0, atol=1e-9)


def test_each_stage_is_a_block_of_its_own(batch):
    form = batch.response(batch.excitation("VIN"), joints=JOINTS)
    names = batch.layout.nodes
    stages = [{re.search(r"\d+", names[r])[0] for r in block.rows if r < len(names)}
              for block in form.forms]
    # one block per stage (its nodes carry the stage's number), none spanning two
    assert all(len(digits) == 1 for digits in stages)
    assert len(form.forms) == STAGES


def test_frequencies_of_their_own_per_sample(batch):
    rhs = batch.excitation("VIN")
    form = batch.response(rhs, joints=JOINTS)
    rng = np.random.default_rng(1)
    freqs = 10.0 ** rng.uniform(-1, 7, size=(batch.size, 3))
    rows = [batch.layout.row("out8"), batch.layout.row("c5")]
    whole = batch.solve_ac(freqs, rhs)
    scale = np.max(np.abs(whole), axis=2, keepdims=True)  # the source's volt, at least
    np.testing.assert_allclose(np.abs(form(freqs, rows) - whole[:, :, rows]) / scale, 0.0,
                               atol=1e-9)


def test_a_small_circuit_keeps_the_whole_circuits_form():
    c = Circuit("rc").vsource("VIN", "a", "0", ac=1.0).resistor("R1", "a", "b", 1e3)
    c.capacitor("C1", "b", "0", 1e-6)
    batch = solve_batch(c)
    assert not isinstance(batch.response(batch.excitation("VIN"), joints=("b",)),
                          BlockResponse)


def test_joint_elimination_solves_a_bordered_chain():
    """A tridiagonal chain with two dense border rows, against LAPACK's dense solve."""
    rng = np.random.default_rng(2)
    size, batch = 12, 5
    pairs = [(i, i) for i in range(size)] + [(i, i + 1) for i in range(size - 3)]
    pairs += [(i + 1, i) for i in range(size - 3)]
    pairs += [(i, b) for i in range(size) for b in (size - 2, size - 1)]
    pairs += [(b, i) for i in range(size) for b in (size - 2, size - 1)]
    pairs = list(dict.fromkeys(pairs))
    values = {p: rng.normal(size=batch) + 1j * rng.normal(size=batch) for p in pairs}
    for i in range(size):  # dominant diagonals, as nodal admittances have
        values[(i, i)] = values[(i, i)] + 20.0
    rhs = [rng.normal(size=batch) + 0j for _ in range(size)]
    dense = np.zeros((batch, size, size), complex)
    for (i, j), v in values.items():
        dense[:, i, j] = v
    expected = np.linalg.solve(dense, np.stack(rhs, axis=1)[..., None])[..., 0]
    found = np.stack(JointLu(size, pairs).solve(dict(values), rhs), axis=1)
    np.testing.assert_allclose(found, expected, rtol=1e-12)


def test_a_block_past_the_sparse_size_equals_the_direct_solve(monkeypatch):
    # a ladder of 1k series, 10k shunt sections inside one block, after the chain: its
    # (r, r) matrix per sample would grow with the square of the ladder
    from kitleaf.engine import blocks
    from kitleaf.engine.sparse_ac import SPARSE_SIZE

    sections = 80
    c = boost_chain()
    c.resistor("RL0", f"out{STAGES}", "l1", 1e3, tol=0.05)
    for k in range(1, sections):
        c.resistor(f"RP{k}", f"l{k}", "0", 10e3, tol=0.05)
        c.resistor(f"RS{k}", f"l{k}", f"l{k + 1}", 1e3, tol=0.05)
    c.capacitor("CL", f"l{sections}", "end", 1e-7, tol=0.1).resistor("RE", "end", "0", 1e4)
    batch = solve_batch(c, samples=8, seed=4)
    formed = []
    real = blocks._dense
    monkeypatch.setattr(blocks, "_dense", lambda piece: formed.append(piece[0]) or real(piece))
    rhs = batch.excitation("VIN")
    form = batch.response(rhs, joints=JOINTS + ("end",))
    assert isinstance(form, BlockResponse)
    assert max(f.rows.size for f in form.forms) >= sections > SPARSE_SIZE
    assert all(shape[0] < SPARSE_SIZE or shape[1] < SPARSE_SIZE for shape in formed)
    nodes = list(range(len(batch.layout.nodes)))
    direct = batch.solve_ac(FREQS, rhs)[:, :, nodes]
    scale = np.max(np.abs(direct), axis=2, keepdims=True)
    np.testing.assert_allclose(np.abs(form(FREQS, nodes) - direct) / scale, 0.0, atol=1e-9)


def test_blocks_left_alike_share_their_forms():
    # one capacitor of the third stage made tenfold: every other stage's block has the same
    # values, so its modal form is the one the first response holds, not solved again
    from kitleaf.engine.batch import nominal_variants

    c = boost_chain()
    nominal = solve_batch(c)
    names = [e.name for e in c.elements]
    changed = np.ones((1, len(names)))
    changed[0, names.index("C32")] = 10.0
    rhs = nominal.excitation("VIN")
    first = nominal_variants(nominal, np.ones((1, len(names)))).response(rhs, joints=JOINTS)
    second = nominal_variants(nominal, changed).response(rhs, joints=JOINTS)
    shared = [a is b for a, b in zip(first.forms, second.forms, strict=True)]
    assert shared.count(False) == 1 and not shared[2]
    # and the changed kit's answer is its own: the direct solve of the changed circuit
    batch = solve_batch(c.replaced("C32", value=10e-6))
    nodes = list(range(len(batch.layout.nodes)))
    direct = batch.solve_ac(FREQS, rhs)[:, :, nodes]
    scale = np.max(np.abs(direct), axis=2, keepdims=True)
    np.testing.assert_allclose(np.abs(second(FREQS, nodes) - direct) / scale, 0.0, atol=1e-9)
