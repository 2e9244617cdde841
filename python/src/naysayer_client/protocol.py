"""The ask/tell adapter: a Python object plays as a naysayer method over the line protocol.

Write the method as an object with ``ask`` and ``tell`` (and, optionally, ``over``)::

    class MyMethod:
        def __init__(self, game):        # game: a Game (class, box, accuracy, budget, seed)
            ...
        def ask(self):                   # the next move:
            return [0.0, 0.0]            #   a sequence of floats: ask about this point
            # return Output([...])       #   stop and claim a point
            # return EMPTY               #   stop and claim that K is empty
        def tell(self, point, answer):   # the Answer to the query `point`
            ...
        def over(self, reason):          # optional: naysayer ended the game first
            ...                          #   ("budget" or "interrupted")

    if __name__ == "__main__":
        main(MyMethod)

and play it with ``naysayer play --exec -- python3 my_method.py``. :func:`serve` reads
the header, builds the method (an exception there refuses the game with its message),
replies ``ready``, sends the queries and the output, decodes the answers, and stops
quietly when naysayer sends ``{"msg":"over","reason":...}`` (the budget ran out, or
naysayer was interrupted) or closes its input. An exception in ``ask``, ``tell`` or the
factory is reported to naysayer as ``fail`` with its type and message (the game ends as
"method failed"), and its traceback goes to stderr, which naysayer passes through.

Standard output is the protocol channel. While :func:`serve` runs with the real standard
output it moves the channel to a private copy of file descriptor 1 and points
descriptor 1 and ``sys.stdout`` at standard error, so a stray ``print`` or a library
(even one written in C or Fortran) that writes to standard output cannot break the game;
both are restored when the game ends.
"""

import json
import math
import os
import sys
import traceback
from fractions import Fraction

from .numbers import NumberError, axis_of, read_normal, read_number, read_numbers

__all__ = [
    "PROTOCOL",
    "Answer",
    "EMPTY",
    "Game",
    "Output",
    "ProtocolError",
    "main",
    "serve",
]

PROTOCOL = 1
"""The protocol version this adapter speaks."""


class ProtocolError(ValueError):
    """A line from naysayer that is not the protocol message expected there."""


class Game:
    """The game header, read: the class, the box, the accuracy, the budget and the seed.

    Attributes: ``raw`` (the header as parsed JSON), ``klass`` (the class object, as in the
    transcript header), ``kind`` (``"feasibility"``, ``"first-order"``, ``"lattice"`` or
    ``"large-scale"``), ``oracle`` (``"separation"`` or ``"first-order"``), ``dim`` (the
    length of every point), ``integer_dim`` (the first ``integer_dim`` coordinates are
    integer ones), ``lower`` and ``upper`` (the box, lists of floats; ``None`` for the
    large-scale classes, which have none), ``accuracy_name`` (``"rho"``, ``"eps"`` or
    ``None``) and ``accuracy``, ``budget``, ``seed``, and the class parameters where the
    class has them (else ``None``): ``half_width``, ``rho``, ``eps``, ``lipschitz``,
    ``promise``, ``function`` and ``horizon`` (large-scale).
    """

    def __init__(self, header):
        self.raw = header
        self.klass = header["class"]
        self.kind = self.klass["kind"]
        self.oracle = header["oracle"]
        self.dim = header["query_dim"]
        self.integer_dim = header["integer_dim"]
        box = header["box"]
        if box is None:
            self.lower = self.upper = None
        else:
            self.lower = read_numbers(box["lower"], float, "box lower", self.dim)
            self.upper = read_numbers(box["upper"], float, "box upper", self.dim)
        accuracy = header["accuracy"]
        self.accuracy_name = accuracy["name"] if accuracy else None
        self.accuracy = read_number(accuracy["value"], float, "accuracy") if accuracy else None
        self.budget = header["budget"]
        self.seed = header["seed"]
        self.half_width = self.klass.get("half_width")
        self.rho = self.klass.get("rho")
        self.eps = self.klass.get("eps")
        self.lipschitz = self.klass.get("lipschitz")
        self.promise = self.klass.get("promise", "may-be-empty")
        self.function = self.klass.get("function")
        self.horizon = self.klass.get("horizon")


class Answer:
    """One answer of the oracle: ``kind`` is ``"inside"``, ``"cut"`` or ``"first-order"``.

    Cuts (every point y of K has normal . y < offset, strictly): ``normal`` (a dense list
    of floats), ``axis`` and ``sign`` when the normal is sign * e_axis (else ``None``),
    ``offset`` (float) and ``offset_exact`` (Fraction), ``normal_exact`` (Fractions).
    First-order answers: ``value`` and ``subgradient`` (floats), ``value_exact`` and
    ``subgradient_exact`` (Fractions). The floats are the nearest floats to the exact
    values; the exact values are read when first used. ``index`` counts queries from 1;
    ``raw`` is the answer as parsed JSON.
    """

    def __init__(self, raw, dim, index=None):
        if not isinstance(raw, dict):
            raise ProtocolError("an answer must be an object, got %r" % (raw,))
        self.raw = raw
        self.dim = dim
        self.index = index
        self.kind = raw.get("kind")
        self.axis = self.sign = None
        self.normal = self.offset = self.value = self.subgradient = None
        if self.kind == "cut":
            axis = axis_of(raw.get("normal"), dim)
            if axis is not None:
                self.axis, self.sign = axis
            self.normal = read_normal(raw.get("normal"), dim, float)
            self.offset = read_number(raw.get("offset"), float, "offset")
        elif self.kind == "first-order":
            self.value = read_number(raw.get("value"), float, "value")
            self.subgradient = read_numbers(raw.get("subgradient"), float, "subgradient", dim)
        elif self.kind != "inside":
            raise ProtocolError('unknown answer kind %r (expected "inside", "cut" or '
                                '"first-order")' % (self.kind,))

    def _exact(self, name, read):
        cache = self.__dict__.setdefault("_exact_cache", {})
        if name not in cache:
            cache[name] = read()
        return cache[name]

    @property
    def offset_exact(self):
        """The cut's offset, exact (``None`` unless a cut)."""
        if self.kind != "cut":
            return None
        return self._exact("offset", lambda: read_number(self.raw["offset"], Fraction, "offset"))

    @property
    def normal_exact(self):
        """The cut's normal as exact Fractions (``None`` unless a cut)."""
        if self.kind != "cut":
            return None
        return self._exact("normal", lambda: read_normal(self.raw["normal"], self.dim, Fraction))

    @property
    def value_exact(self):
        """f(x), exact (``None`` unless a first-order answer)."""
        if self.kind != "first-order":
            return None
        return self._exact("value", lambda: read_number(self.raw["value"], Fraction, "value"))

    @property
    def subgradient_exact(self):
        """The subgradient as exact Fractions (``None`` unless a first-order answer)."""
        if self.kind != "first-order":
            return None
        return self._exact(
            "subgradient",
            lambda: read_numbers(self.raw["subgradient"], Fraction, "subgradient", self.dim))

    def __repr__(self):
        if self.kind == "cut":
            return "Answer(cut, normal=%r, offset=%r)" % (self.normal, self.offset)
        if self.kind == "first-order":
            return "Answer(first-order, value=%r, subgradient=%r)" % (self.value,
                                                                      self.subgradient)
        return "Answer(inside)"


class Output:
    """The move "stop and claim ``point``"."""

    def __init__(self, point):
        self.point = point

    def __repr__(self):
        return "Output(%r)" % (self.point,)


class _Empty:
    def __repr__(self):
        return "EMPTY"


EMPTY = _Empty()
"""The move "stop and claim that K is empty" (holds no rho-ball)."""


def _point(values, dim, what):
    """A move's point as a list of ``dim`` finite floats (ValueError otherwise)."""
    try:
        point = [float(v) for v in values]
    except (TypeError, ValueError) as error:
        raise ValueError("%s: not a sequence of numbers (%s)" % (what, error)) from None
    if len(point) != dim:
        raise ValueError("%s has %d coordinates, the game has %d" % (what, len(point), dim))
    for i, v in enumerate(point):
        if not math.isfinite(v):
            raise ValueError("%s: coordinate %d is %r (points must be finite)" % (what, i, v))
    return point


def _refuse_constant(name):
    raise ProtocolError("%s is not a JSON number" % name)


def _parse(line, number):
    try:
        message = json.loads(line, parse_constant=_refuse_constant)
    except ValueError as error:
        raise ProtocolError("naysayer's line %d is not JSON (%s): %r"
                            % (number, error, line[:80])) from None
    if not isinstance(message, dict):
        raise ProtocolError("naysayer's line %d is not a JSON object: %r" % (number, line[:80]))
    return message


class _Channel:
    """The protocol output: one compact JSON object a line, flushed at once."""

    def __init__(self, stream):
        self.stream = stream
        self.broken = False

    def send(self, message):
        # allow_nan=False: a NaN or an infinity raises here instead of reaching the wire.
        line = json.dumps(message, allow_nan=False, separators=(",", ":")) + "\n"
        try:
            self.stream.write(line)
            self.stream.flush()
        except (BrokenPipeError, OSError):
            # naysayer is gone; nothing more can be said.
            self.broken = True


def _claim_stdout():
    """Moves the protocol channel off descriptor 1 (see the module docs).

    Returns (stream, restore) or None when standard output has no file descriptor.
    """
    try:
        sys.stdout.flush()
        fd = sys.stdout.fileno()
        sys.stderr.flush()
        err = sys.stderr.fileno()
    except (AttributeError, OSError, ValueError):
        return None
    saved = os.dup(fd)
    stream = os.fdopen(os.dup(saved), "w", encoding="utf-8", newline="\n")
    os.dup2(err, fd)
    previous = sys.stdout
    sys.stdout = sys.stderr

    def restore():
        try:
            stream.close()
        except OSError:
            pass
        try:
            sys.stderr.flush()
        except (OSError, ValueError):
            pass
        os.dup2(saved, fd)
        os.close(saved)
        sys.stdout = previous

    return stream, restore


def serve(factory, stdin=None, stdout=None):
    """Plays one game with ``factory(game)`` as the method; returns how it ended.

    ``stdin`` and ``stdout`` default to the process's own (naysayer's pipes); pass text
    streams to drive the adapter yourself (tests). The result is one of ``"output"`` (the
    method claimed a point), ``"empty"`` (it claimed K empty), the ``reason`` of
    naysayer's ``over`` message (``"budget"``, ``"interrupted"``, ...), ``"closed"``
    (naysayer closed the input, or went away, mid-game), ``"failed"`` (the method raised,
    or naysayer sent a line this adapter cannot read: ``fail`` was sent) or
    ``"refused"`` (the header names another protocol version: ``fail`` was sent).
    """
    stdin = sys.stdin if stdin is None else stdin
    restore = None
    if stdout is None:
        claimed = _claim_stdout()
        if claimed is not None:
            stdout, restore = claimed
        else:
            stdout = sys.stdout
    try:
        return _play(factory, stdin, _Channel(stdout))
    finally:
        if restore is not None:
            restore()


def _fail(channel, reason):
    channel.send({"msg": "fail", "reason": reason})
    return "failed"


def _method_error(channel, error):
    traceback.print_exc(file=sys.stderr)
    return _fail(channel, "%s: %s" % (type(error).__name__, error))


def _play(factory, stdin, channel):
    line = stdin.readline()
    if not line:
        print("naysayer_client: no game header on standard input (run this program with "
              "naysayer play --exec -- ...)", file=sys.stderr)
        return "closed"
    try:
        header = _parse(line, 1)
        if header.get("msg") != "game":
            raise ProtocolError('expected the game header {"msg":"game",...} first, got %r'
                                % (header.get("msg"),))
        if header.get("protocol") != PROTOCOL:
            _fail(channel, "this client speaks protocol version %d, naysayer sent version %r"
                  % (PROTOCOL, header.get("protocol")))
            return "refused"
        game = Game(header)
    except (ProtocolError, NumberError, KeyError, TypeError, AttributeError) as error:
        return _fail(channel, "cannot read the game header: %s: %s"
                     % (type(error).__name__, error))
    try:
        method = factory(game)
    except Exception as error:  # the method refuses this game
        return _method_error(channel, error)
    channel.send({"msg": "ready", "protocol": PROTOCOL})
    asked = 0
    while not channel.broken:
        try:
            move = method.ask()
            if move is EMPTY:
                channel.send({"msg": "empty"})
                return "empty"
            if isinstance(move, Output):
                channel.send({"msg": "output", "point": _point(move.point, game.dim, "output")})
                return "output"
            point = _point(move, game.dim, "query %d" % (asked + 1))
        except Exception as error:
            return _method_error(channel, error)
        channel.send({"msg": "query", "point": point})
        asked += 1
        line = stdin.readline()
        if not line:
            return "closed"
        try:
            message = _parse(line, asked + 1)
            kind = message.get("msg")
            if kind == "over":
                return _over(method, message.get("reason"))
            if kind != "answer":
                raise ProtocolError('expected {"msg":"answer",...} or {"msg":"over",...} '
                                    "after query %d, got %r" % (asked, kind))
            if message.get("index") != asked:
                raise ProtocolError("answer index %r, expected %d"
                                    % (message.get("index"), asked))
            answer = Answer(message.get("answer"), game.dim, asked)
        except (ProtocolError, NumberError) as error:
            return _fail(channel, "cannot read the answer to query %d: %s" % (asked, error))
        try:
            method.tell(point, answer)
        except Exception as error:
            return _method_error(channel, error)
    return "closed"


def _over(method, reason):
    """naysayer ended the game: tell the method if it listens, and stop quietly."""
    reason = reason if isinstance(reason, str) else "over"
    hook = getattr(method, "over", None)
    if callable(hook):
        try:
            hook(reason)
        except Exception:  # the game is over; the traceback is all that can be said
            traceback.print_exc(file=sys.stderr)
    return reason


def main(factory):
    """Serves one game on the process's standard input and output, then exits: status 0
    unless the method failed or the header was refused (status 1)."""
    ending = serve(factory)
    sys.exit(1 if ending in ("failed", "refused") else 0)
