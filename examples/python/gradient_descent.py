"""Gradient descent as an external naysayer method for the large-scale classes.

x_0 = 0, x_{t+1} = x_t - g_t / beta on the smooth and strongly convex classes (step 1/beta;
Cauchy 1847; the guarantee f(x_T) - f* <= beta R^2 / (2T) as in Beck & Teboulle 2009,
Thm 3.1, from memory), and x_{t+1} = x_t - R g_t / (M sqrt(T)) on the nonsmooth class,
where it outputs the best point seen. It asks the game's horizon T queries, then
outputs. The arithmetic is that of naysayer's built-in `gradient` (smooth) and
`unconstrained-subgradient` (nonsmooth), so the two give the same transcript.

    naysayer play --class large-scale --kind smooth -d 200 --horizon 30 \\
        --exec -- python3 examples/python/gradient_descent.py
"""

import math
import os
import sys

# This checkout's client (python/src), or the installed package: see naysayer_method.py.
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import naysayer_method  # noqa: E402,F401
from naysayer_client import Output, main  # noqa: E402


class GradientDescent:
    def __init__(self, game):
        if game.kind != "large-scale":
            raise ValueError("this example plays the large-scale classes")
        function = game.function
        self.horizon = max(1, game.horizon)
        self.nonsmooth = function["kind"] == "nonsmooth"
        if self.nonsmooth:
            self.step = function["radius"] / (function["lipschitz"] * math.sqrt(self.horizon))
        else:
            self.step = 1.0 / function["smoothness"]
        self.point = [0.0] * game.dim
        self.asked = 0
        self.best = None

    def ask(self):
        if self.asked >= self.horizon:
            if self.nonsmooth and self.best is not None:
                return Output(self.best[1])
            return Output(self.point)
        return list(self.point)

    def tell(self, point, answer):
        self.asked += 1
        if self.best is None or answer.value < self.best[0]:
            self.best = (answer.value, list(point))
        self.point = [x - self.step * g for x, g in zip(self.point, answer.subgradient)]


if __name__ == "__main__":
    main(GradientDescent)
