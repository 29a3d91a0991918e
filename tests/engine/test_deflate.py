"""Port matrices with a very slow pole: the split eigendecomposition keeps the pole-residue
form exact, where a plain one loses most of its digits to the slow pole's norm.

The fixture is an invented four-stage kit (demo data) whose op-amp input (1e12 ohm) gives
D M a time constant of about 2e10 s beside audio ones of 1e-3 s. That input is biased to a
reference no stage makes (the bias-path rule says so): with a real op-amp's input bias
current it would drift to a rail, so here the op-amp is a TL072 without one, which keeps the
1e12-ohm port this module is about. The references are direct
LU solves (partial pivoting, Golub and Van Loan, Matrix Computations, 3.4) of the port
system and of the whole MNA system, and the eigenpair identities A V = V diag(lambda),
W V = I themselves.
"""

from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest

from kitleaf.circuit.build import build_circuit
from kitleaf.engine import get_model, register_model, solve_batch
from kitleaf.engine.deflate import SLOW, eig_split
from kitleaf.engine.eigen import DRIFT
from kitleaf.guide import parse_guide
from kitleaf.specs.solve import nominal_positions

FIXTURE = Path(__file__).parent / "fixtures" / "kit-005.md"
UNBIASED = "FB-TEST-TL072-NO-IB"  # test data: the library TL072 with no input bias current
FREQS = np.array([10.0, 1000.0, 20e3])


@pytest.fixture(scope="module")
def batch():
    tl072 = get_model("TL072")
    register_model(UNBIASED, replace(tl072, name=UNBIASED, params={**tl072.params, "IB": 0.0},
                                     provenance="user"))
    kit = build_circuit(parse_guide(FIXTURE, FIXTURE.read_text().replace("TL072", UNBIASED)))
    return solve_batch(kit.netlist(nominal_positions(kit), None), samples=80, seed=1)


@pytest.fixture(scope="module")
def form(batch):
    return batch.response(batch.excitation("VIN"))


def test_fixture_has_a_slow_port(form):
    # the case this module is about: a time constant beyond SLOW beside audio ones
    taus = np.abs(np.linalg.eigvals(form.ports.dm[0]))
    assert taus.max() > 1e6 * SLOW and 1e-4 < np.median(taus[taus > 1e-6]) < 1.0


def test_eigenpairs_of_the_split(form):
    a = form.ports.dm
    values, vecs, inv = eig_split(a)
    # W V = I within the refined decompositions' own bound (eigen.DRIFT)
    assert np.abs(inv @ vecs - np.eye(a.shape[-1])).max() <= DRIFT
    # column by column, relative to each eigenvector's own image
    left, right = a @ vecs, vecs * values[:, None, :]
    scale = np.abs(right).max(axis=1) + np.abs(a).max(axis=(1, 2))[:, None] * 1e-16
    assert (np.abs(left - right).max(axis=1) / scale).max() < 1e-6


def test_every_sample_passes_the_check(form):
    assert form.bad.size == 0


def test_modal_equals_direct_port_solve(form):
    exact = form.ports.direct(FREQS)
    scale = np.abs(exact).max(axis=2, keepdims=True)
    assert (np.abs(form(FREQS) - exact) / scale).max() < 1e-9


def test_modal_equals_whole_system_solve(batch, form):
    rhs = batch.excitation("VIN")
    exact = batch.solve_ac(FREQS, rhs)[:, :, :len(batch.layout.nodes)]
    scale = np.abs(exact).max(axis=2, keepdims=True)
    assert (np.abs(form(FREQS) - exact) / scale).max() < 1e-9

