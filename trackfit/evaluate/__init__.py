"""Evaluation: tracking metrics and holdout studies on plain arrays."""
