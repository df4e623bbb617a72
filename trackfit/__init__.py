"""trackfit: sparse, stable index-tracking weights from return histories."""

__version__ = "0.1.0"
