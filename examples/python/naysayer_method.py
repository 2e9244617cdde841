"""Makes the examples run from a checkout of naysayer without `pip install ./python`.

The Python client is the package `naysayer_client` in `python/src/` of this repository
(install it anywhere with `pip install ./python`). Importing this file puts this
checkout's `python/src` first on `sys.path`, so the examples use the client of the same
checkout as the binary; a copy of an example outside the checkout uses the installed
package (or a copy of the `naysayer_client` folder beside it). It also re-exports the client's names, so scripts written against the
earlier single-file client (`from naysayer_method import EMPTY, Output, serve`) keep
working, with `serve` exiting with status 1 when the method failed, as it did.
"""

import os
import sys

_SRC = os.path.normpath(
    os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "python", "src"))
if os.path.isfile(os.path.join(_SRC, "naysayer_client", "__init__.py")) and _SRC not in sys.path:
    sys.path.insert(0, _SRC)

try:
    import naysayer_client
except ImportError:
    sys.exit("naysayer_method: the package naysayer_client is neither in this checkout "
             "(python/src), nor beside this file, nor installed: run `pip install ./python` "
             "in naysayer's repository (or copy python/src/naysayer_client beside this file)")

from naysayer_client import (  # noqa: E402,F401
    EMPTY,
    PROTOCOL,
    Answer,
    Game,
    Output,
    main,
    read_normal,
    read_number,
    read_numbers,
    solver_method,
)

__all__ = ["Answer", "EMPTY", "Game", "Output", "PROTOCOL", "main", "serve", "number",
           "read_number", "read_numbers", "read_normal", "solver_method"]


def serve(factory, stdin=None, stdout=None):
    """Plays one game (see `naysayer_client.serve`); exits with status 1 when the method
    failed or the header was refused, as the earlier client did."""
    ending = naysayer_client.serve(factory, stdin, stdout)
    if ending in ("failed", "refused"):
        raise SystemExit(1)
    return ending


def number(x):
    """An exact protocol number as (nearest float, exact Fraction), as the earlier client
    returned it."""
    from fractions import Fraction

    return read_number(x, float), read_number(x, Fraction)
