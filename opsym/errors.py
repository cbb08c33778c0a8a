"""The exceptions opsym raises, all under one root, :class:`OpsymError`.

Each class also subclasses the built-in exception that matches its meaning, so
``except ValueError`` keeps working in code that does not know opsym. Every
message names the element, node, symbol or file field at fault and says what to
change.

Examples
--------
>>> import opsym
>>> c = opsym.Circuit("demo")
>>> c.resistor("R1", "a", "0", value=1000)
>>> try:
...     c.resistor("R1", "a", "b")
... except opsym.DuplicateNameError as err:
...     print(err)
element name 'R1' is already used by resistor R1 (a-0); choose another name
"""

from __future__ import annotations

__all__ = [
    "ArgumentTypeError",
    "BudgetError",
    "CircuitError",
    "DesignFileError",
    "DuplicateNameError",
    "ExpressionTooLargeError",
    "FloatingNodeError",
    "InvalidValueError",
    "MissingDependencyError",
    "MissingValueError",
    "NoFeedbackError",
    "NoSolutionError",
    "OpsymError",
    "SingularCircuitError",
    "UnknownNameError",
    "ValueRangeError",
    "ValueSyntaxError",
]


class OpsymError(Exception):
    """Root of every error opsym raises on purpose."""


class ArgumentTypeError(OpsymError, TypeError):
    """A Python argument of the wrong type (a list where a mapping is expected, and so on)."""


class CircuitError(OpsymError, ValueError):
    """The circuit as declared cannot be analysed; the message says why."""


class DuplicateNameError(CircuitError):
    """Two elements were given the same name."""


class InvalidValueError(CircuitError):
    """A component value is zero, negative, NaN, infinite or of the wrong kind."""


class FloatingNodeError(CircuitError):
    """Some nodes have no DC path to ground (a floating island)."""


class NoFeedbackError(CircuitError):
    """An op-amp has no DC path from its output back to its inverting input."""


class UnknownNameError(OpsymError, LookupError):
    """A node, element or symbol name that the circuit does not have."""

    def __str__(self) -> str:  # LookupError would quote the message like a key
        return str(self.args[0]) if self.args else ""


class SingularCircuitError(OpsymError, ArithmeticError):
    """The circuit equations have no unique solution (loops of sources, and so on)."""


class NoSolutionError(OpsymError, ValueError):
    """A requested condition (a null, a preferred value) has no admissible solution."""


class DesignFileError(OpsymError, ValueError):
    """A design file is malformed; the message names the file, table and key."""


class ValueSyntaxError(OpsymError, ValueError):
    """A value or expression written as text could not be read."""


class ValueRangeError(ValueSyntaxError):
    """A value is not finite or beyond the range opsym reads (see ``parse_value``)."""


class BudgetError(OpsymError, ValueError):
    """An error budget, tolerance or temperature study lacks or misuses an input value."""


class MissingDependencyError(OpsymError, ImportError):
    """An optional library (matplotlib for figures) is not installed; install it."""


class MissingValueError(BudgetError):
    """A numeric step (dominant terms at the nominal values) lacks some symbols' values;
    the message names them."""


class ExpressionTooLargeError(OpsymError, ArithmeticError):
    """An expression would expand beyond what opsym computes with (a nested result's
    ``X₁ = …`` written out, a dominant-term part); the message gives the estimated size
    and what to do instead (usually: give values)."""
