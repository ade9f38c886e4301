"""Exceptions raised by libdisc (instances are made by the C++ layer)."""


class Error(Exception):
    """Base of every error libdisc raises: catch ``disc.Error`` for any of them."""


class InputError(Error, ValueError):
    """A value, option or argument is outside what the library accepts (the same ranges and
    words as the netlist language); the message names the range and the value."""


class NetlistError(InputError):
    """A netlist (or an element added in code) is wrong.

    ``diagnostics`` lists every problem as (file, line, column, message); ``file``, ``line`` and
    ``column`` give the first.
    """

    def __init__(self, message, diagnostics=()):
        super().__init__(message)
        self.diagnostics = list(diagnostics)
        first = self.diagnostics[0] if self.diagnostics else ("", 0, 0, message)
        self.file, self.line, self.column = first[0], first[1], first[2]


class SimulationError(Error, RuntimeError):
    """The engine failed (singular circuit, no convergence, time step too small); the message
    names the cause."""


class TraceError(InputError):
    """A measured trace (CSV) cannot be used; ``file``, ``line`` (1-based, every line of the
    file counted), ``column`` (1-based, 0 when the fault is not in one cell) and ``column_name``
    locate the fault."""

    def __init__(self, message, file="", line=0, column=0, column_name=""):
        super().__init__(message)
        self.file, self.line, self.column, self.column_name = file, line, column, column_name

