"""The data layer: read, align and clean return series. Knows files and pandas, nothing of fitting."""

from trackfit.data.dataset import DataStep, TrackingData

__all__ = ["DataStep", "TrackingData"]
