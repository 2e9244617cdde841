"""Readers for the numbers and cut normals that naysayer writes (protocol and transcripts).

Numbers come in two shapes:

- a plain JSON number is exactly the float (IEEE 754 double) it parses to, whatever its
  spelling; an integer token too: ``9007199254740993`` is the float 9007199254740992;
- ``{"exact": "p/q", "approx": f}`` is a rational that no float holds: ``exact`` is
  ASCII, an optional ``-``, 1 to 4096 decimal digits, and optionally ``/`` and 1 to 4096
  digits of a nonzero denominator (no ``+``, spaces, ``_``, exponents or decimal points);
  its magnitude is below 2^1024 - 2^970; ``approx`` is its nearest float (ties to even);
  the object has exactly these two keys.

Cut normals come in two shapes:

- a dense JSON array of numbers, one per coordinate (naysayer writes plain numbers here);
- ``{"axis": i, "sign": s}``: the vector s e_i (axis counted from 0, s = +1 or -1).

Every reader takes ``to=float`` (the nearest float; for a plain number that is the
number itself) or ``to=Fraction`` (the exact value, a ``fractions.Fraction``). A value
outside this grammar raises :class:`NumberError` (a ``ValueError``) naming what is wrong.
"""

import math
import re
from fractions import Fraction

__all__ = [
    "NumberError",
    "MAX_EXACT_DIGITS",
    "read_number",
    "read_numbers",
    "read_normal",
    "axis_of",
]

MAX_EXACT_DIGITS = 4096
"""Most decimal digits above, and below, the fraction bar of an exact number."""

# ASCII digits only ([0-9], not \d, which also matches other scripts' digits).
_EXACT_TEXT = re.compile(r"(-?)([0-9]+)(?:/([0-9]+))?")

# |value| must stay below 2^1024 - 2^970: at and above it the nearest float is infinite.
_FLOAT_LIMIT = Fraction(2**1024 - 2**970)


class NumberError(ValueError):
    """A number or normal outside the grammar of naysayer's numbers."""


def _check_to(to):
    if to is not float and to is not Fraction:
        raise TypeError("to= must be float or fractions.Fraction, not %r" % (to,))


def _plain(value, what):
    """A plain JSON number as the float it denotes."""
    # bool is an int subclass in Python, but JSON true/false are not numbers.
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise NumberError("%s: expected a number, got %s" % (what, _show(value)))
    if isinstance(value, int):
        try:
            # int -> float rounds to nearest, ties to even: the reading of an integer token.
            value = float(value)
        except OverflowError:
            raise NumberError("%s: the integer %s... is beyond the float range"
                              % (what, str(value)[:20])) from None
    if not math.isfinite(value):
        raise NumberError("%s: %r is not finite (naysayer never writes NaN or infinity)"
                          % (what, value))
    return value


def _exact(value, what):
    """An {"exact", "approx"} object as (Fraction, float), checked."""
    if set(value) != {"exact", "approx"}:
        raise NumberError('%s: an exact number has exactly the keys "exact" and "approx", '
                          "got %s" % (what, sorted(value)))
    text = value["exact"]
    if not isinstance(text, str):
        raise NumberError('%s: "exact" must be text "p/q", got %s' % (what, _show(text)))
    match = _EXACT_TEXT.fullmatch(text)
    if match is None:
        raise NumberError('%s: %r is not "p" or "p/q" with ASCII digits and an optional "-"'
                          % (what, text[:40]))
    sign, top, bottom = match.groups()
    if len(top) > MAX_EXACT_DIGITS or (bottom is not None and len(bottom) > MAX_EXACT_DIGITS):
        raise NumberError("%s: an exact number has at most %d digits above and below the bar"
                          % (what, MAX_EXACT_DIGITS))
    denominator = int(bottom) if bottom is not None else 1
    if denominator == 0:
        raise NumberError("%s: the denominator of %r is zero" % (what, text[:40]))
    exact = Fraction(-int(top) if sign else int(top), denominator)
    if abs(exact) >= _FLOAT_LIMIT:
        raise NumberError("%s: an exact number must be smaller than 2^1024 - 2^970 in "
                          "magnitude" % what)
    approx = _plain(value["approx"], what + ' ("approx")')
    # float(Fraction) divides two ints, which Python rounds correctly (ties to even).
    if float(exact) != approx:
        raise NumberError("%s: approx %r is not the float nearest to %s"
                          % (what, approx, text[:40]))
    return exact, approx


def read_number(value, to=float, what="number"):
    """The value of one number of either shape, as a float or as an exact Fraction.

    ``value`` is what ``json.loads`` gave for it (an int, a float or a dict); ``to`` is
    ``float`` or ``fractions.Fraction``; ``what`` names the number in error messages.
    With ``to=float`` an exact number gives its ``approx`` (checked to be the nearest
    float to ``exact``); a plain number gives itself. With ``to=Fraction`` a plain number
    gives the exact dyadic rational of its float (``Fraction(0.1)``, not 1/10).
    """
    _check_to(to)
    if isinstance(value, dict):
        exact, approx = _exact(value, what)
        return exact if to is Fraction else approx
    number = _plain(value, what)
    return Fraction(number) if to is Fraction else number


def read_numbers(values, to=float, what="vector", dim=None):
    """A JSON array of numbers of either shape (a subgradient, a point) as a list.

    With ``dim``, the array must have that length.
    """
    _check_to(to)
    if not isinstance(values, list):
        raise NumberError("%s: expected an array of numbers, got %s" % (what, _show(values)))
    if dim is not None and len(values) != dim:
        raise NumberError("%s: expected %d numbers, got %d" % (what, dim, len(values)))
    return [read_number(v, to, "%s[%d]" % (what, i)) for i, v in enumerate(values)]


def read_normal(normal, dim, to=float, what="normal"):
    """A cut normal of either shape as a dense list of ``dim`` numbers.

    ``{"axis": i, "sign": s}`` gives s at index i and 0 elsewhere; a dense array must hold
    ``dim`` numbers. Use :func:`axis_of` to keep the cheap shape.
    """
    _check_to(to)
    axis = axis_of(normal, dim, what)
    if axis is not None:
        i, sign = axis
        dense = [to(0)] * dim
        dense[i] = to(sign)
        return dense
    if not isinstance(normal, list):
        raise NumberError('%s: expected an array or {"axis": i, "sign": s}, got %s'
                          % (what, _show(normal)))
    return read_numbers(normal, to, what, dim)


def axis_of(normal, dim, what="normal"):
    """``(axis, sign)`` when ``normal`` is the axis shape ``{"axis": i, "sign": s}``, else
    ``None`` (a dense array); the axis is checked to lie in [0, dim)."""
    if not isinstance(normal, dict):
        return None
    if set(normal) != {"axis", "sign"}:
        raise NumberError('%s: an axis normal has exactly the keys "axis" and "sign", got %s'
                          % (what, sorted(normal)))
    axis, sign = normal["axis"], normal["sign"]
    if isinstance(axis, bool) or not isinstance(axis, int) or not 0 <= axis < dim:
        raise NumberError("%s: axis %s is not an integer in [0, %d)" % (what, _show(axis), dim))
    if isinstance(sign, bool) or sign not in (1, -1) or not isinstance(sign, int):
        raise NumberError("%s: sign %s is not the integer +1 or -1" % (what, _show(sign)))
    return axis, sign


def _show(value):
    text = repr(value)
    return text if len(text) <= 60 else text[:57] + "..."
