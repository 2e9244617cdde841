"""A Python client of naysayer's external-method line protocol (standard library only).

Write your method as an ask/tell object and hand a factory for it to `serve`:

    class MyMethod:
        def __init__(self, game):      # game: a Game (class, box, accuracy, budget, seed)
            ...
        def ask(self):                 # the next move:
            return [0.0, 0.0]          #   a list of floats: ask about this point
            # return Output([...])     #   stop and claim a point
            # return EMPTY             #   stop and claim that K is empty
        def tell(self, point, answer): # the answer (an Answer) to the query `point`
            ...

    if __name__ == "__main__":
        serve(MyMethod)

and play it with `naysayer play --exec -- python3 my_method.py`. The protocol itself
(JSON, one message a line) is documented in the rustdoc of naysayer's
`method::external` module and in the README; this file speaks it for you: it reads the
header, replies `ready`, then sends your queries and outputs and decodes the answers.
Every number naysayer computed comes both as the nearest float and as an exact
`fractions.Fraction` (`offset` / `offset_exact`, `value` / `value_exact`, ...). An
exception in `ask` or `tell` is reported to naysayer as a failure of the method.
"""

import json
import sys
from fractions import Fraction

PROTOCOL = 1

__all__ = ["Answer", "EMPTY", "Game", "Output", "serve", "number"]


def number(x):
    """An exact protocol number as (nearest float, exact Fraction).

    A plain JSON number is exactly the float it parses to; an object
    {"exact": "p/q", "approx": f} carries a value no float holds.
    """
    if isinstance(x, dict):
        return float(x["approx"]), Fraction(x["exact"])
    return float(x), Fraction(x)


class Game:
    """The game header: the class and its parameters."""

    def __init__(self, header):
        self.raw = header
        self.klass = header["class"]
        # "feasibility", "first-order", "lattice" or "large-scale"
        self.kind = self.klass["kind"]
        self.oracle = header["oracle"]  # "separation" or "first-order"
        self.dim = header["query_dim"]
        self.integer_dim = header["integer_dim"]
        # The large-scale classes have no box (x_0 = 0, ||x_0 - x*|| <= radius): None.
        box = header["box"]
        self.lower = [float(v) for v in box["lower"]] if box else None
        self.upper = [float(v) for v in box["upper"]] if box else None
        accuracy = header["accuracy"]
        self.accuracy_name = accuracy["name"] if accuracy else None
        self.accuracy = float(accuracy["value"]) if accuracy else None
        self.budget = header["budget"]
        self.seed = header["seed"]
        # Class parameters, where the class has them.
        self.half_width = self.klass.get("half_width")
        self.rho = self.klass.get("rho")
        self.eps = self.klass.get("eps")
        self.lipschitz = self.klass.get("lipschitz")
        self.promise = self.klass.get("promise", "may-be-empty")
        # Large-scale classes: the function class and the horizon T (the game's length).
        self.function = self.klass.get("function")
        self.horizon = self.klass.get("horizon")


class Answer:
    """One answer: kind "inside", "cut" or "first-order".

    Cuts: `normal` (dense list of floats), `axis` and `sign` when the normal is the axis
    vector sign * e_axis (else None), `offset` and `offset_exact`: every point y of K has
    normal . y < offset. First-order: `value`, `value_exact`, `subgradient` (floats),
    `subgradient_exact` (Fractions).
    """

    def __init__(self, raw, dim):
        self.raw = raw
        self.kind = raw["kind"]
        self.axis = self.sign = None
        if self.kind == "cut":
            normal = raw["normal"]
            if isinstance(normal, dict):
                self.axis, self.sign = normal["axis"], normal["sign"]
                self.normal = [0.0] * dim
                self.normal[self.axis] = float(self.sign)
            else:
                self.normal = [float(v) for v in normal]
            self.offset, self.offset_exact = number(raw["offset"])
        elif self.kind == "first-order":
            self.value, self.value_exact = number(raw["value"])
            pairs = [number(g) for g in raw["subgradient"]]
            self.subgradient = [p[0] for p in pairs]
            self.subgradient_exact = [p[1] for p in pairs]


class Output:
    """Stop and claim `point`."""

    def __init__(self, point):
        self.point = [float(v) for v in point]


EMPTY = object()
"""Stop and claim that K is empty (holds no rho-ball)."""


def _send(out, message):
    # allow_nan=False: NaN or infinity raises here instead of reaching the wire.
    out.write(json.dumps(message, allow_nan=False, separators=(",", ":")) + "\n")
    out.flush()


def serve(factory, stdin=None, stdout=None):
    """Play one game: read the header, build `factory(game)`, ask and tell until it stops."""
    stdin = stdin or sys.stdin
    stdout = stdout or sys.stdout
    line = stdin.readline()
    if not line:
        raise SystemExit("naysayer_method: no game header on stdin")
    header = json.loads(line)
    if header.get("msg") != "game" or header.get("protocol") != PROTOCOL:
        _send(stdout, {"msg": "fail", "reason": "this client speaks protocol version 1"})
        raise SystemExit(1)
    _send(stdout, {"msg": "ready", "protocol": PROTOCOL})
    game = Game(header)
    try:
        method = factory(game)
        while True:
            move = method.ask()
            if move is EMPTY:
                _send(stdout, {"msg": "empty"})
                return
            if isinstance(move, Output):
                _send(stdout, {"msg": "output", "point": move.point})
                return
            point = [float(v) for v in move]
            _send(stdout, {"msg": "query", "point": point})
            line = stdin.readline()
            if not line:
                # naysayer ended the game (the budget ran out): stop quietly.
                raise SystemExit(0)
            reply = json.loads(line)
            if reply.get("msg") != "answer":
                raise ValueError("expected an answer, got %r" % reply.get("msg"))
            method.tell(point, Answer(reply["answer"], game.dim))
    except SystemExit:
        raise
    except Exception as error:  # reported to naysayer, which ends the game
        _send(stdout, {"msg": "fail", "reason": "%s: %s" % (type(error).__name__, error)})
        raise SystemExit(1)
