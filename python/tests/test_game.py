"""play(): one game through the naysayer binary.

The games need the binary: from NAYSAYER_BIN or PATH; without it they are skipped (naysayer's
`cargo test` runs this file with NAYSAYER_BIN set and fails on any skip).
"""

import json
import os
import shutil
import sys
import tempfile
import textwrap
import unittest
from unittest import mock

from naysayer_client import (
    GameResult,
    NaysayerError,
    NaysayerFailed,
    NaysayerNotFound,
    NaysayerTimeout,
    find_binary,
    play,
)

SRC = os.path.abspath(os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "src"))

try:
    BINARY = find_binary()
except NaysayerNotFound:
    BINARY = None

# Bisection on the box, in the arithmetic of naysayer's built-in `midpoint` (axis cuts only,
# as the halving adversary gives; other cuts are ignored, which is sound but slower).
BISECTION = textwrap.dedent("""
    import sys
    sys.path.insert(0, %r)
    from fractions import Fraction
    from naysayer_client import EMPTY, main

    class Bisection:
        def __init__(self, game):
            self.lower, self.upper, self.rho = list(game.lower), list(game.upper), game.rho
        def ask(self):
            if any(Fraction(u) - Fraction(l) <= Fraction(2.0 * self.rho)
                   for l, u in zip(self.lower, self.upper)):
                return EMPTY
            return [0.5 * l + 0.5 * u for l, u in zip(self.lower, self.upper)]
        def tell(self, point, answer):
            if answer.axis is None:
                return
            i = answer.axis
            if answer.sign > 0:
                self.upper[i] = min(self.upper[i], answer.offset)
            else:
                self.lower[i] = max(self.lower[i], -answer.offset)

    main(Bisection)
""") % SRC

ASK_FOREVER = textwrap.dedent("""
    import sys
    sys.path.insert(0, %r)
    from naysayer_client import main

    class Forever:
        def __init__(self, game):
            self.dim = game.dim
        def ask(self):
            return [0.0] * self.dim
        def tell(self, point, answer):
            pass
        def over(self, reason):
            print("over:", reason, file=sys.stderr)

    main(Forever)
""") % SRC


class Binary(unittest.TestCase):
    def test_a_missing_binary_is_a_clear_error(self):
        with self.assertRaisesRegex(NaysayerNotFound, "does not exist.*NAYSAYER_BIN"):
            find_binary("/nonexistent/naysayer")
        with mock.patch.dict(os.environ, {"NAYSAYER_BIN": "/nonexistent/bin/naysayer"}):
            with self.assertRaisesRegex(NaysayerNotFound, "NAYSAYER_BIN='/nonexistent"):
                find_binary()
            with self.assertRaises(NaysayerError):
                play("whatever.py")
        with mock.patch.dict(os.environ, {"NAYSAYER_BIN": "", "PATH": "/nonexistent"}):
            with self.assertRaisesRegex(NaysayerNotFound, "no `naysayer` on PATH"):
                find_binary()
        with tempfile.TemporaryDirectory() as folder:
            with self.assertRaisesRegex(NaysayerNotFound, "not an executable file"):
                find_binary(folder + os.sep)

    def test_results_are_read_from_the_json_object(self):
        raw = {"kind": "certificate", "class": {"kind": "feasibility", "dim": 1},
               "family": "feasibility", "method": "external: x", "adversary": "halving",
               "seed": 0, "budget": 10, "queries_used": 3, "censored": False,
               "method_failure": None, "transcript": "g.jsonl", "verified": True,
               "rejection": None, "outcome": "output-stands", "refuting_witness": None,
               "certified_lower_bound": 3, "certified_uncertainty": None, "gap": None,
               "lower_bound": None, "upper_bound": None, "claimed": None, "holds": None}
        result = GameResult.from_json(raw)
        self.assertEqual((result.queries_used, result.certified_lower_bound, result.outcome,
                          result.verified, result.transcript), (3, 3, "output-stands", True,
                                                                "g.jsonl"))
        self.assertEqual(result.game_class, {"kind": "feasibility", "dim": 1})
        del raw["outcome"]
        with self.assertRaises(KeyError):
            GameResult.from_json(raw)


@unittest.skipIf(BINARY is None, "no naysayer binary (set NAYSAYER_BIN or put it on PATH)")
class Games(unittest.TestCase):
    def setUp(self):
        folder = tempfile.TemporaryDirectory()
        self.addCleanup(folder.cleanup)
        self.folder = folder.name

    def script(self, name, text):
        path = os.path.join(self.folder, name)
        with open(path, "w") as f:
            f.write(text)
        return path

    def test_a_separation_game(self):
        method = self.script("bisection.py", BISECTION)
        path = os.path.join(self.folder, "game.jsonl")
        result = play(method, dim=3, rho=1e-3, transcript=path)
        # d = 3, rho = 1e-3: k = 9 halvings per coordinate (2^-9 > 1e-3 > 2^-10), so the
        # halving adversary keeps bisection for d k + 1 = 28 queries and certifies 28
        # (docs/theory.md §1.1; counted by hand).
        self.assertEqual(result.queries_used, 28, result)
        self.assertEqual(result.certified_lower_bound, 28)
        self.assertEqual(result.outcome, "output-stands")
        self.assertTrue(result.verified)
        self.assertEqual(result.exit_code, 0)
        self.assertEqual(result.transcript, path)
        self.assertEqual((result.family, result.adversary, result.kind),
                         ("feasibility", "halving", "certificate"))
        self.assertTrue(result.method.startswith("external: "), result.method)
        with open(path) as f:
            records = [json.loads(line) for line in f]
        self.assertEqual(len(records), 30)
        self.assertEqual(records[-1]["data"]["queries_used"], 28)

    def test_a_first_order_game_in_a_temporary_transcript(self):
        method = self.script("forever.py", ASK_FOREVER)
        result = play([sys.executable, method], class_="first-order", dim=2, eps=0.2,
                      budget=5)
        self.addCleanup(shutil.rmtree, os.path.dirname(result.transcript))
        self.assertTrue(os.path.isfile(result.transcript))
        # The budget ended the game: censored, and the program stopped quietly.
        self.assertEqual(result.queries_used, 5)
        self.assertTrue(result.censored)
        self.assertEqual(result.outcome, "budget-exhausted")
        self.assertIsNone(result.method_failure)
        self.assertTrue(result.verified)
        self.assertEqual(result.adversary, "slab-funnel")
        self.assertEqual(result.exit_code, 0, result.stderr)
        # naysayer said why the game ended, and the method heard it.
        self.assertIn("over: budget", result.stderr)

    def test_a_timeout_interrupts_the_game_and_keeps_its_result(self):
        slow = ASK_FOREVER.replace("return [0.0] * self.dim",
                                   "import time; time.sleep(0.05); return [0.0] * self.dim")
        method = self.script("slow.py", slow)
        path = os.path.join(self.folder, "slow.jsonl")
        with self.assertRaises(NaysayerTimeout) as caught:
            play(method, dim=2, transcript=path, timeout=1.5)
        error = caught.exception
        self.assertIn("more than 1.5 s", str(error))
        self.assertEqual(error.exit_code, 6, error.stderr)
        result = error.result
        self.assertIsNotNone(result, error.stderr)
        self.assertEqual(result.outcome, "interrupted")
        self.assertTrue(result.verified)
        self.assertGreater(result.queries_used, 0)
        with open(path) as f:
            final = json.loads(f.read().splitlines()[-1])
        self.assertEqual(final["data"]["ending"]["kind"], "interrupted")
        self.assertEqual(final["data"]["queries_used"], result.queries_used)

    def test_a_failing_method_is_a_result(self):
        method = self.script("broken.py", ASK_FOREVER.replace("pass", "1 / 0"))
        result = play(method, dim=2, transcript=False)
        self.assertIsNone(result.transcript)
        self.assertEqual(result.exit_code, 3)
        self.assertEqual(result.outcome, "method-failed")
        self.assertIn("ZeroDivisionError", result.method_failure)
        self.assertIn("Traceback", result.stderr)

    def test_bad_arguments_raise_with_naysayers_message(self):
        method = self.script("forever.py", ASK_FOREVER)
        with self.assertRaises(NaysayerFailed) as caught:
            play(method, rho=-1.0, transcript=False)
        error = caught.exception
        self.assertEqual(error.exit_code, 2)
        self.assertIn("rho", error.stderr)
        self.assertIn("rho", str(error))
        self.assertIn("--rho", error.command)
        with self.assertRaisesRegex(NaysayerFailed, "no-such-option"):
            play(method, no_such_option=3, transcript=False)


if __name__ == "__main__":
    unittest.main()
