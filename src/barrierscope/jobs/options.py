"""Where the user's options come in: each is checked once, and a value the science cannot
use becomes an :class:`~barrierscope.errors.InputError` that names the option (exit 2).

The science raises ``ValueError`` in the terms of its parameters; :func:`option` wraps the
one call that checks an option's value, so that only that value's problems are turned into
user messages — a ``ValueError`` from anywhere else stays a fault (exit 3).
"""

from __future__ import annotations

import contextlib

from ..errors import InputError


@contextlib.contextmanager
def option(flag: str):
    """Inside the block, a ``ValueError`` is the option's problem: ``InputError("FLAG: …")``."""
    try:
        yield
    except ValueError as exc:
        raise InputError(f"{flag}: {str(exc).strip()}") from None


def at_least(flag: str, value, minimum):
    """``value`` unless it is below ``minimum`` (then the option's message)."""
    if value < minimum:
        raise InputError(f"{flag} must be at least {minimum} (got {value})")
    return value


def positive(flag: str, value: float) -> float:
    if not value > 0:
        raise InputError(f"{flag} must be a positive number (got {value})")
    return float(value)


def one_of(flag: str, value: str, choices) -> str:
    key = str(value).strip().lower()
    if key not in choices:
        raise InputError(f"{flag} {value!r}: choose one of {', '.join(choices)}")
    return key


def library_unit(units: str | None, old: str | None = None) -> str | None:
    """A library's energy unit (``--units``, or its older spelling ``--energy-units``),
    normalised; None for the model's own."""
    from ..units import normalize_unit

    if units and old and units != old:
        raise InputError(f"--units {units} and --energy-units {old} disagree (they are the same option)")
    if not (units or old):
        return None
    with option("--units"):
        return normalize_unit(units or old)


def temperature(text: str) -> tuple[float, str]:
    """``--temperature`` in kelvin, and a note when a bare number looks like Celsius."""
    from ..units import parse_temperature

    with option("--temperature"):
        return parse_temperature(text)
