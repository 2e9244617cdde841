"""Bisection (midpoint) for separation classes, as an external naysayer method.

Queries the centre of its box model; shrinks the box with every cut (axis cuts exactly,
dense cuts by interval bound tightening); stops with "empty" once some side is at most
2 rho (decided exactly with Fractions), or under the nonempty promise with the box
centre. It follows the same arithmetic as naysayer's built-in `midpoint` (multidimensional
bisection; common practice, no source), so the two give the same transcript.

    naysayer play -d 3 --rho 1e-3 --exec -- python3 examples/python/bisection.py
"""

import os
import sys
from fractions import Fraction

# This checkout's client (python/src), or the installed package: see naysayer_method.py.
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import naysayer_method  # noqa: E402,F401
from naysayer_client import EMPTY, Output, main  # noqa: E402

EPSILON = 2.0 ** -52


class Bisection:
    def __init__(self, game):
        if game.oracle != "separation":
            raise ValueError("bisection needs a separation oracle")
        if game.integer_dim:
            raise ValueError("bisection plays continuous classes only")
        self.lower = list(game.lower)
        self.upper = list(game.upper)
        self.rho = game.rho if game.rho is not None else 0.0
        self.nonempty = game.promise == "nonempty"
        self.found = None

    def centre(self):
        return [0.5 * l + 0.5 * u for l, u in zip(self.lower, self.upper)]

    def too_thin(self):
        two_rho = Fraction(2.0 * self.rho)
        return any(Fraction(u) - Fraction(l) <= two_rho for l, u in zip(self.lower, self.upper))

    def ask(self):
        if self.found is not None:
            return Output(self.found)
        if self.too_thin():
            return Output(self.centre()) if self.nonempty else EMPTY
        return self.centre()

    def tell(self, point, answer):
        if answer.kind == "inside":
            self.found = point
        elif answer.kind == "cut":
            if answer.axis is not None:
                self.axis_cut(answer.axis, answer.sign, answer.offset)
            else:
                self.dense_cut(answer.normal, answer.offset)

    def axis_cut(self, i, sign, b):
        if sign > 0:
            self.upper[i] = min(self.upper[i], b)
        else:
            self.lower[i] = max(self.lower[i], -b)

    def dense_cut(self, a, b):
        min_terms = [min(ai * l, ai * u) for ai, l, u in zip(a, self.lower, self.upper)]
        total = 0.0
        for t in min_terms:
            total += t
        if total != total or abs(total) == float("inf"):
            return
        for i, ai in enumerate(a):
            if ai == 0.0:
                continue
            rest = total - min_terms[i]
            bound = (b - rest) / ai
            slack = 8.0 * EPSILON * (abs(b) + abs(rest)) / abs(ai)
            if ai > 0.0:
                self.upper[i] = min(self.upper[i], bound + slack)
            else:
                self.lower[i] = max(self.lower[i], bound - slack)


if __name__ == "__main__":
    main(Bisection)
