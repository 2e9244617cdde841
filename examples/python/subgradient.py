"""The projected subgradient method as an external naysayer method (first-order classes).

x_0 = 0, x_{t+1} = P_X(x_t - eta g_t) with the fixed step eta = D / (L' sqrt(N)),
D = R sqrt(d) and L' the l2 Lipschitz constant (L, or L sqrt(d) for the l1 class); it
plans N = ceil((L' D / eps)^2) queries (computed exactly with fractions) and outputs the
best point seen (Shor 1962; the guarantee min_t f(x_t) - f* <= L' D / sqrt(N) over the N
queries, as in Nesterov, Introductory Lectures on Convex Optimization, 2004, sec. 3.2.3,
from memory). With `--decaying` the step is D / (L' sqrt(t + 1)). The arithmetic is that
of naysayer's built-in `subgradient`, so the two give the same transcript.

    naysayer play --class first-order -d 2 --eps 0.2 --exec -- python3 examples/python/subgradient.py
"""

import math
import os
import sys
from fractions import Fraction

# This checkout's client (python/src), or the installed package: see naysayer_method.py.
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import naysayer_method  # noqa: E402,F401
from naysayer_client import Output, main  # noqa: E402

MAX_PLANNED = 2 ** 40


class Subgradient:
    def __init__(self, game, decaying=False):
        if game.kind != "first-order":
            raise ValueError("the subgradient method needs first-order answers")
        self.decaying = decaying
        self.half_width = game.half_width
        diameter = game.half_width * math.sqrt(game.dim)
        l1 = game.klass.get("norm") == "l1"
        lipschitz = game.lipschitz * math.sqrt(game.dim) if l1 else game.lipschitz
        # (L' D / eps)^2 = L^2 R^2 d / eps^2 (times d for l1): exact in fractions.
        squared = (Fraction(game.lipschitz) * Fraction(game.half_width) / Fraction(game.eps)) ** 2
        squared *= game.dim * game.dim if l1 else game.dim
        self.planned = min(MAX_PLANNED, max(1, math.ceil(squared)))
        self.scale = diameter / lipschitz
        self.asked = 0
        self.point = [0.0] * game.dim
        self.best = None

    def ask(self):
        if self.asked >= self.planned:
            return Output(self.best[1] if self.best else self.point)
        return list(self.point)

    def tell(self, point, answer):
        self.asked += 1
        if self.best is None or answer.value < self.best[0]:
            self.best = (answer.value, list(point))
        if self.decaying:
            eta = self.scale / math.sqrt(float(self.asked) + 1.0)
        else:
            eta = self.scale / math.sqrt(float(self.planned))
        r = self.half_width
        self.point = [min(max(x - eta * g, -r), r) for x, g in zip(self.point, answer.subgradient)]


if __name__ == "__main__":
    decaying = "--decaying" in sys.argv[1:]
    main(lambda game: Subgradient(game, decaying))
