"""Write naysayer methods in Python and play them from Python (standard library only).

- :mod:`naysayer_client.protocol`: the ask/tell adapter (:func:`serve`, :func:`main`,
  :class:`Game`, :class:`Answer`, :class:`Output`, :data:`EMPTY`) that speaks naysayer's
  line protocol for a Python object;
- :mod:`naysayer_client.numbers`: readers of the two shapes of numbers and of cut
  normals, as ``float`` or exact ``fractions.Fraction``;
- :mod:`naysayer_client.game`: :func:`play` runs one game with the ``naysayer`` binary
  and returns a :class:`GameResult`;
- :mod:`naysayer_client.callback`: :func:`solver_method` plays a solver that calls a
  function (``scipy.optimize.minimize`` style) through the adapter.
"""

from .callback import GameOver, SolverMethod, solver_method
from .game import (
    GameResult,
    NaysayerError,
    NaysayerFailed,
    NaysayerNotFound,
    NaysayerTimeout,
    find_binary,
    play,
)
from .numbers import NumberError, axis_of, read_normal, read_number, read_numbers
from .protocol import EMPTY, PROTOCOL, Answer, Game, Output, ProtocolError, main, serve

__version__ = "0.1.0"

__all__ = [
    "Answer",
    "EMPTY",
    "Game",
    "GameOver",
    "GameResult",
    "NaysayerError",
    "NaysayerFailed",
    "NaysayerNotFound",
    "NaysayerTimeout",
    "NumberError",
    "Output",
    "PROTOCOL",
    "ProtocolError",
    "SolverMethod",
    "axis_of",
    "find_binary",
    "main",
    "play",
    "read_normal",
    "read_number",
    "read_numbers",
    "serve",
    "solver_method",
]
