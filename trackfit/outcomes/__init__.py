"""What each command produced, as plain values the reporter renders.

One module per command (``fit``, ``backtest``, ``diff``). The reporter imports these types and
nothing from :mod:`trackfit.commands`; the commands build them.
"""
