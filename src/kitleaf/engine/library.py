"""The device library: generic part types with their parameters, spreads and provenance."""

from __future__ import annotations

from kitleaf.engine.models import DeviceModel, register_model

LIBRARY: tuple[DeviceModel, ...] = ()

for _model in LIBRARY:
    register_model(_model.name, _model)
