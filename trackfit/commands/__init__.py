"""The commands: one module each, owning its flow from a job file to files written.

- :mod:`~trackfit.commands.prepare`: the one preparation step every command shares (read and
  align the data once, select the window, build the splitter and the limits, check them).
- :mod:`~trackfit.commands.fit_plan`: the fit's holdout split and folds (``fit`` and ``check``).
- :mod:`~trackfit.commands.fit`, :mod:`~trackfit.commands.check`,
  :mod:`~trackfit.commands.backtest`, :mod:`~trackfit.commands.diff`: one per command.
- :mod:`~trackfit.commands.output`: output folders, their layouts and locks.

They raise :class:`~trackfit.errors.TrackfitError` for problems the user can fix, report
progress through a callback and never print; :mod:`trackfit.cli` turns errors into exit codes.
"""
