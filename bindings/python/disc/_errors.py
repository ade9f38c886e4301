"""Exceptions raised by libdisc (instances are made by the C++ layer)."""


class NetlistError(ValueError):
    """A netlist (or an element added in code) is wrong.

    ``diagnostics`` lists every problem as (file, line, column, message); ``file``, ``line`` and
    ``column`` give the first.
    """

    def __init__(self, message, diagnostics=()):
        super().__init__(message)
        self.diagnostics = list(diagnostics)
        first = self.diagnostics[0] if self.diagnostics else ("", 0, 0, message)
        self.file, self.line, self.column = first[0], first[1], first[2]


class SimulationError(RuntimeError):
    """The engine failed (singular circuit, no convergence, time step too small); the message
    names the cause."""
