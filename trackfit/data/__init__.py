"""The data layer: read, align and clean return series. Knows files and pandas, nothing of fitting."""

from trackfit.data.dataset import DataStep, TrackingData
from trackfit.data.load import load_tracking_data

__all__ = ["DataStep", "TrackingData", "load_tracking_data"]
