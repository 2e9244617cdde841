"""Solvers that call a function (``scipy.optimize.minimize`` and the like) as ask/tell methods.

Such a solver asks for values by calling ``fun(x)``; the protocol needs the method to
hand over one point at a time. :func:`solver_method` runs the solver on a helper thread
and turns each call of its oracle into one query::

    def solve(game, oracle):
        def fun(x):
            return oracle(x).value          # an Answer: value, subgradient, ...
        return scipy.optimize.minimize(fun, [0.0] * game.dim, method="Nelder-Mead").x

    main(solver_method(solve))

Answers are cached by point: asking again about a point already asked costs no query
(naysayer counts every query it receives, repeated or not). When naysayer ends the game
first (budget, interrupt) the oracle raises :class:`GameOver`, a ``BaseException`` so
that solvers catching ``Exception`` let it through, and the thread ends.
"""

import queue
import threading

from .protocol import EMPTY, Output

__all__ = ["GameOver", "SolverMethod", "solver_method"]


class GameOver(BaseException):
    """Raised inside the solver's oracle calls when naysayer ended the game."""


_STOP = object()


class SolverMethod:
    """The ask/tell side of a solver running on a helper thread (see the module docs).

    ``solve(game, oracle)`` returns the point to output (a sequence of floats), an
    :class:`Output`, or :data:`EMPTY`; an exception it raises ends the game as "method
    failed" with its message. ``queries`` counts the queries asked, ``calls`` the
    oracle's calls (answered from the cache or not).
    """

    def __init__(self, game, solve):
        self.game = game
        self.queries = 0
        self.calls = 0
        self._solve = solve
        self._cache = {}
        self._requests = queue.Queue()
        self._answers = queue.Queue()
        self._thread = threading.Thread(target=self._run, name="naysayer-solver", daemon=True)
        self._thread.start()

    def _run(self):
        try:
            result = self._solve(self.game, self._oracle)
        except GameOver:
            return
        except BaseException as error:  # handed to the adapter, which reports it
            self._requests.put(("error", error))
            return
        self._requests.put(("done", result))

    def _oracle(self, point):
        """The solver's oracle: the Answer at ``point`` (one query unless cached)."""
        self.calls += 1
        key = tuple(float(v) for v in point)
        if key in self._cache:
            return self._cache[key]
        self._requests.put(("query", list(key)))
        answer = self._answers.get()
        if answer is _STOP:
            raise GameOver()
        self._cache[key] = answer
        return answer

    def ask(self):
        kind, value = self._requests.get()
        if kind == "query":
            self.queries += 1
            return value
        if kind == "done":
            if value is EMPTY or isinstance(value, Output):
                return value
            return Output(value)
        if isinstance(value, Exception):
            raise value
        raise RuntimeError("the solver stopped with %s" % type(value).__name__) from value

    def tell(self, point, answer):
        self._answers.put(answer)

    def over(self, reason):
        self._answers.put(_STOP)
        self._thread.join(timeout=1.0)


def solver_method(solve):
    """A factory for :func:`serve` / :func:`main`: ``factory(game)`` is a
    :class:`SolverMethod` running ``solve(game, oracle)``."""
    return lambda game: SolverMethod(game, solve)
