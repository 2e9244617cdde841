"""The ask/tell adapter, driven with text streams (and, for standard output, a subprocess)."""

import io
import json
import os
import subprocess
import sys
import textwrap
import unittest
from contextlib import redirect_stderr
from fractions import Fraction

from naysayer_client import EMPTY, Output, serve

SRC = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "src")

# The complete exchange of the README's protocol section (d = 1, rho = 0.25), as recorded
# from naysayer and examples/python/bisection.py.
HEADER = ('{"msg":"game","protocol":1,"class":{"kind":"feasibility","dim":1,"half_width":1.0,'
          '"rho":0.25,"promise":"may-be-empty"},"oracle":"separation","query_dim":1,'
          '"integer_dim":0,"box":{"lower":[-1.0],"upper":[1.0]},"accuracy":{"name":"rho",'
          '"value":0.25},"budget":100,"seed":0}')
ANSWER_1 = ('{"msg":"answer","index":1,"answer":{"kind":"cut","normal":{"axis":0,"sign":1},'
            '"offset":0.0}}')
ANSWER_2 = ('{"msg":"answer","index":2,"answer":{"kind":"cut","normal":{"axis":0,"sign":1},'
            '"offset":-0.5}}')
PROGRAM_LINES = ['{"msg":"ready","protocol":1}', '{"msg":"query","point":[0.0]}',
                 '{"msg":"query","point":[-0.5]}', '{"msg":"empty"}']

FIRST_ORDER_HEADER = json.dumps({
    "msg": "game", "protocol": 1,
    "class": {"kind": "first-order", "dim": 2, "half_width": 1.0, "eps": 0.2,
              "lipschitz": 1.0, "norm": "l2"},
    "oracle": "first-order", "query_dim": 2, "integer_dim": 0,
    "box": {"lower": [-1.0, -1.0], "upper": [1.0, 1.0]},
    "accuracy": {"name": "eps", "value": 0.2}, "budget": 3, "seed": 7,
    "a_later_field": "ignored"})
# The README's first-order answer with an exact value (index changed to 1).
EXACT_ANSWER = ('{"msg":"answer","index":1,"answer":{"kind":"first-order","value":{"exact":'
                '"-24229210626892415/144115188075855872","approx":-0.16812392191542802},'
                '"subgradient":[-0.25,0.0]}}')


def play(factory, *lines):
    """Serves one game on the given naysayer lines; returns (ending, program lines, stderr)."""
    stdin = io.StringIO("".join(line + "\n" for line in lines))
    stdout = io.StringIO()
    stderr = io.StringIO()
    with redirect_stderr(stderr):
        ending = serve(factory, stdin, stdout)
    return ending, stdout.getvalue().splitlines(), stderr.getvalue()


class Halver:
    """Bisection in one dimension: the README exchange's method."""

    def __init__(self, game):
        self.game = game
        self.lower, self.upper = game.lower[0], game.upper[0]
        self.answers = []

    def ask(self):
        if self.upper - self.lower <= 2 * self.game.rho:
            return EMPTY
        return [0.5 * (self.lower + self.upper)]

    def tell(self, point, answer):
        self.answers.append(answer)
        if answer.kind == "cut" and answer.sign == 1:
            self.upper = min(self.upper, answer.offset)


class Forever:
    """Asks about the origin until told to stop; remembers what it was told."""

    def __init__(self, game):
        self.game = game
        self.told = []
        self.over_reason = None

    def ask(self):
        return [0.0] * self.game.dim

    def tell(self, point, answer):
        self.told.append((point, answer))

    def over(self, reason):
        self.over_reason = reason


class Exchanges(unittest.TestCase):
    def test_the_readme_exchange(self):
        methods = []

        def factory(game):
            methods.append(Halver(game))
            return methods[0]

        ending, lines, _ = play(factory, HEADER, ANSWER_1, ANSWER_2)
        self.assertEqual(ending, "empty")
        self.assertEqual(lines, PROGRAM_LINES)
        game = methods[0].game
        self.assertEqual((game.kind, game.oracle, game.dim, game.integer_dim),
                         ("feasibility", "separation", 1, 0))
        self.assertEqual((game.rho, game.accuracy_name, game.accuracy, game.budget),
                         (0.25, "rho", 0.25, 100))
        first = methods[0].answers[0]
        self.assertEqual((first.kind, first.axis, first.sign, first.normal, first.offset),
                         ("cut", 0, 1, [1.0], 0.0))
        self.assertEqual(first.offset_exact, 0)
        self.assertEqual(first.normal_exact, [1])
        self.assertEqual(first.index, 1)

    def test_an_output_ends_the_game(self):
        class Once(Forever):
            def ask(self):
                return Output([0.5, -0.25]) if self.told else [0.0, 0.0]

        ending, lines, _ = play(Once, FIRST_ORDER_HEADER, EXACT_ANSWER)
        self.assertEqual(ending, "output")
        self.assertEqual(lines[-1], '{"msg":"output","point":[0.5,-0.25]}')

    def test_exact_first_order_answers(self):
        methods = []

        def factory(game):
            methods.append(Forever(game))
            return methods[0]

        over = '{"msg":"over","reason":"budget"}'
        ending, lines, _ = play(factory, FIRST_ORDER_HEADER, EXACT_ANSWER, over)
        self.assertEqual(ending, "budget")
        method = methods[0]
        self.assertEqual(method.over_reason, "budget")
        self.assertEqual((method.game.eps, method.game.lipschitz, method.game.seed),
                         (0.2, 1.0, 7))
        point, answer = method.told[0]
        self.assertEqual(point, [0.0, 0.0])
        self.assertEqual(answer.value, -0.16812392191542802)
        self.assertEqual(answer.value_exact, Fraction(-24229210626892415, 144115188075855872))
        self.assertEqual(answer.subgradient, [-0.25, 0.0])
        self.assertEqual(answer.subgradient_exact, [Fraction(-1, 4), 0])
        self.assertIsNone(answer.offset_exact)
        # Two queries asked; the second was answered by the end of the game.
        self.assertEqual(lines.count('{"msg":"query","point":[0.0,0.0]}'), 2)


class EndOfGame(unittest.TestCase):
    def test_every_over_reason_stops_quietly(self):
        for reason in ["budget", "output-received", "interrupted", "a-later-reason"]:
            with self.subTest(reason=reason):
                methods = []

                def factory(game):
                    methods.append(Forever(game))
                    return methods[-1]

                over = json.dumps({"msg": "over", "reason": reason})
                ending, lines, stderr = play(factory, HEADER, over)
                self.assertEqual(ending, reason)
                self.assertEqual(methods[0].over_reason, reason)
                self.assertEqual(lines, ['{"msg":"ready","protocol":1}',
                                         '{"msg":"query","point":[0.0]}'])
                self.assertEqual(stderr, "")

    def test_a_method_without_an_over_hook(self):
        class Plain:
            def __init__(self, game):
                pass

            def ask(self):
                return [0.0]

            def tell(self, point, answer):
                pass

        ending, _, _ = play(Plain, HEADER, ANSWER_1, '{"msg":"over","reason":"interrupted"}')
        self.assertEqual(ending, "interrupted")

    def test_end_of_input_stops_quietly(self):
        ending, lines, stderr = play(Forever, HEADER, ANSWER_1)
        self.assertEqual(ending, "closed")
        self.assertEqual(len(lines), 3)
        self.assertEqual(stderr, "")
        ending, lines, stderr = play(Forever)
        self.assertEqual((ending, lines), ("closed", []))
        self.assertIn("no game header", stderr)

    def test_crlf_lines_are_read(self):
        stdin = io.StringIO(HEADER + "\r\n" + ANSWER_1 + "\r\n" + ANSWER_2 + "\r\n")
        stdout = io.StringIO()
        self.assertEqual(serve(Halver, stdin, stdout), "empty")
        self.assertEqual(stdout.getvalue().splitlines(), PROGRAM_LINES)


class Failures(unittest.TestCase):
    def last_fail(self, lines):
        message = json.loads(lines[-1])
        self.assertEqual(message["msg"], "fail", lines)
        return message["reason"]

    def test_an_exception_in_tell_is_reported(self):
        class Broken(Forever):
            def tell(self, point, answer):
                return 1 / 0

        ending, lines, stderr = play(Broken, HEADER, ANSWER_1)
        self.assertEqual(ending, "failed")
        self.assertEqual(self.last_fail(lines), "ZeroDivisionError: division by zero")
        self.assertIn("Traceback", stderr)

    def test_a_factory_that_refuses_the_game_replies_fail_instead_of_ready(self):
        def refuse(game):
            raise ValueError("this method needs a first-order oracle")

        ending, lines, _ = play(refuse, HEADER)
        self.assertEqual(ending, "failed")
        self.assertEqual(len(lines), 1)
        self.assertEqual(self.last_fail(lines),
                         "ValueError: this method needs a first-order oracle")

    def test_bad_points_are_reported(self):
        cases = [
            ([float("nan")], "query 1: coordinate 0 is nan"),
            ([0.0, 1.0], "query 1 has 2 coordinates, the game has 1"),
            (["x"], "query 1: not a sequence of numbers"),
            (Output([float("inf")]), "output: coordinate 0 is inf"),
        ]
        for move, reason in cases:
            with self.subTest(move=move):
                class Bad(Forever):
                    def ask(self):
                        return move

                ending, lines, _ = play(Bad, HEADER)
                self.assertEqual(ending, "failed")
                self.assertIn(reason, self.last_fail(lines))
                self.assertFalse(any('"msg":"query"' in line for line in lines), lines)

    def test_another_protocol_version_is_refused(self):
        header = HEADER.replace('"protocol":1', '"protocol":2')
        ending, lines, _ = play(Forever, header)
        self.assertEqual(ending, "refused")
        self.assertIn("protocol version 1", self.last_fail(lines))

    def test_lines_that_are_not_the_protocol_are_reported(self):
        cases = [
            ([HEADER[:-1]], "cannot read the game header"),
            (['{"msg":"answer"}'], "expected the game header"),
            ([HEADER.replace('"query_dim":1,', "")], "query_dim"),
            ([HEADER, ANSWER_2], "answer index 2, expected 1"),
            ([HEADER, '{"msg":"hello"}'], "got 'hello'"),
            ([HEADER, ANSWER_1.replace("0.0}}", "NaN}}")], "NaN is not a JSON number"),
            ([HEADER, ANSWER_1.replace('"cut"', '"maybe"')], "unknown answer kind"),
            ([HEADER, ANSWER_1.replace('"sign":1', '"sign":3')], "sign 3"),
        ]
        for lines_in, reason in cases:
            with self.subTest(reason=reason):
                ending, lines, _ = play(Forever, *lines_in)
                self.assertEqual(ending, "failed")
                self.assertIn(reason, self.last_fail(lines))


class StandardOutput(unittest.TestCase):
    """With the real standard output, stray prints cannot reach the protocol channel."""

    SCRIPT = textwrap.dedent("""
        import os, sys
        sys.path.insert(0, %r)
        from naysayer_client import EMPTY, main, serve

        class Chatty:
            def __init__(self, game):
                print("hello from __init__")
            def ask(self):
                print("a stray print")
                os.write(1, b"a write on descriptor 1\\n")
                return EMPTY
            def tell(self, point, answer):
                pass

        if sys.argv[1:] == ["serve"]:
            serve(Chatty)
            print("after the game")
        main(Chatty)
    """)

    def run_script(self, stdin, script=None, args=()):
        return subprocess.run([sys.executable, "-c", script or self.SCRIPT % SRC] + list(args),
                              input=stdin, capture_output=True, text=True, timeout=60)

    def test_prints_go_to_stderr_and_standard_output_comes_back(self):
        done = self.run_script(HEADER + "\n", args=["serve"])
        self.assertEqual(done.returncode, 0, done.stderr)
        self.assertEqual(done.stdout.splitlines(),
                         ['{"msg":"ready","protocol":1}', '{"msg":"empty"}', "after the game"])
        for text in ["hello from __init__", "a stray print", "a write on descriptor 1"]:
            self.assertIn(text, done.stderr)

    def test_main_exits_one_when_the_method_failed_and_zero_when_over(self):
        failing = self.SCRIPT.replace("return EMPTY", "raise RuntimeError('no')") % SRC
        done = self.run_script(HEADER + "\n", failing)
        self.assertEqual(done.returncode, 1, done.stderr)
        self.assertEqual(json.loads(done.stdout.splitlines()[1]),
                         {"msg": "fail", "reason": "RuntimeError: no"})
        asking = self.SCRIPT.replace("return EMPTY", "return [0.0]") % SRC
        done = self.run_script(HEADER + '\n{"msg":"over","reason":"budget"}\n', asking)
        self.assertEqual(done.returncode, 0, done.stderr)
        done = self.run_script(HEADER + "\n", asking)
        self.assertEqual(done.returncode, 0, done.stderr)


if __name__ == "__main__":
    unittest.main()
