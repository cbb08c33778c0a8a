"""The version of opsym, in the lowest layer so that design notes can state it."""

__version__ = "0.1.0"
