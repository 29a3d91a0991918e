"""kitleaf: build guides for DIY audio kits, with every number computed from the parts."""

__version__ = "0.1.0"
