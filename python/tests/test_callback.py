"""Solvers that call a function, played through the adapter (solver_method)."""

import io
import json
import unittest
from contextlib import redirect_stderr

from naysayer_client import EMPTY, GameOver, serve, solver_method

from test_protocol import EXACT_ANSWER, FIRST_ORDER_HEADER


def answer(index, value):
    return json.dumps({"msg": "answer", "index": index,
                       "answer": {"kind": "first-order", "value": value,
                                  "subgradient": [1.0, 0.0]}})


def run(solve, *lines):
    stdin = io.StringIO("".join(line + "\n" for line in lines))
    stdout = io.StringIO()
    stderr = io.StringIO()
    with redirect_stderr(stderr):
        ending = serve(solver_method(solve), stdin, stdout)
    return ending, [json.loads(line) for line in stdout.getvalue().splitlines()], stderr.getvalue()


class Solvers(unittest.TestCase):
    def test_each_distinct_point_costs_one_query(self):
        seen = []

        def solve(game, oracle):
            a = oracle([0.0, 0.0])
            b = oracle((0.0, 0.0))          # the same point again: from the cache
            c = oracle([0.5, 0.0])
            seen.extend([a.value, b.value, c.value, a is b])
            return [0.5, 0.0]

        ending, lines, _ = run(solve, FIRST_ORDER_HEADER, EXACT_ANSWER, answer(2, -0.5))
        self.assertEqual(ending, "output")
        self.assertEqual([m["msg"] for m in lines], ["ready", "query", "query", "output"])
        self.assertEqual(lines[2]["point"], [0.5, 0.0])
        self.assertEqual(lines[3]["point"], [0.5, 0.0])
        self.assertEqual(seen, [-0.16812392191542802, -0.16812392191542802, -0.5, True])

    def test_the_solver_may_claim_empty(self):
        ending, lines, _ = run(lambda game, oracle: EMPTY, FIRST_ORDER_HEADER)
        self.assertEqual(ending, "empty")
        self.assertEqual(lines[-1], {"msg": "empty"})

    def test_the_end_of_the_game_stops_the_solver(self):
        stopped = []

        def solve(game, oracle):
            x = 0.0
            try:
                while True:
                    oracle([x, 0.0])
                    x += 0.125
            except Exception:  # a solver catching Exception does not catch GameOver
                stopped.append("Exception")
            except GameOver:
                stopped.append("GameOver")
                raise

        ending, lines, _ = run(solve, FIRST_ORDER_HEADER, answer(1, 1.0), answer(2, 2.0),
                               '{"msg":"over","reason":"budget"}')
        self.assertEqual(ending, "budget")
        self.assertEqual(stopped, ["GameOver"])
        self.assertEqual([m["msg"] for m in lines], ["ready", "query", "query", "query"])

    def test_a_solver_error_is_the_method_failing(self):
        def solve(game, oracle):
            oracle([0.0, 0.0])
            raise ArithmeticError("line search failed")

        ending, lines, stderr = run(solve, FIRST_ORDER_HEADER, EXACT_ANSWER)
        self.assertEqual(ending, "failed")
        self.assertEqual(lines[-1], {"msg": "fail",
                                     "reason": "ArithmeticError: line search failed"})
        self.assertIn("line search failed", stderr)


if __name__ == "__main__":
    unittest.main()
