"""The fault finder: a kit's fault catalogue, every fault solved in batches with the
tolerance spread, and the faults ranked against a builder's meter readings.

Sits between specs and rendering: it reads the circuit model, the engine and the specs'
test-point names; rendering and the commands read it, and nothing below imports it.
"""
