"""The job file's internals: YAML reading, value checks and one parser per group of sections.

The public face is :mod:`trackfit.job` (the dataclasses and :func:`~trackfit.job.load_job`).
"""
