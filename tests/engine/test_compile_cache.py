"""A circuit compiled once serves every analysis of it, and never a changed circuit."""

import gc
import weakref

from kitleaf.engine import Circuit, solve_dc
from kitleaf.engine.compile import _COMPILED, compile_circuit


def divider() -> Circuit:
    c = Circuit().vsource("VCC", "vcc", "0", dc=9.0)
    return c.resistor("R1", "vcc", "mid", 10e3).resistor("R2", "mid", "0", 10e3)


def test_the_same_circuit_compiles_once():
    c = divider()
    assert compile_circuit(c) is compile_circuit(c)


def test_a_changed_circuit_compiles_again():
    c = divider()
    first = compile_circuit(c)
    assert solve_dc(c).voltage("mid") == 4.5
    c.resistor("R3", "mid", "0", 10e3)  # a part added
    second = compile_circuit(c)
    assert second is not first
    # 9 V over 10k into 5k: 3 V (Ohm's law)
    assert abs(solve_dc(c).voltage("mid") - 3.0) < 1e-9
    changed = c.replaced("R1", value=20e3)  # a copy with one part replaced
    assert compile_circuit(changed) is not second
    # 9 V over 20k into 5k: 1.8 V (Ohm's law)
    assert abs(solve_dc(changed).voltage("mid") - 1.8) < 1e-9


def test_the_cache_lets_circuits_go():
    c = divider()
    compile_circuit(c)
    ref = weakref.ref(c)
    assert c in _COMPILED
    del c
    gc.collect()
    assert ref() is None  # the entry kept neither the circuit nor a cycle to it
