"""The readers of naysayer's numbers and cut normals."""

import unittest
from fractions import Fraction

from naysayer_client import NumberError, axis_of, read_normal, read_number, read_numbers

MAX_FLOAT = 1.7976931348623157e308  # the largest finite double (IEEE 754; common knowledge)


def exact(text, approx):
    return {"exact": text, "approx": approx}


class PlainNumbers(unittest.TestCase):
    def test_a_plain_number_is_the_float_it_parses_to(self):
        self.assertEqual(read_number(0.1), 0.1)
        self.assertIs(type(read_number(0.1)), float)
        # The double nearest to 0.1, as the Python documentation of `fractions` prints it
        # (Fraction(0.1) == Fraction(3602879701896397, 36028797018963968)).
        self.assertEqual(read_number(0.1, Fraction), Fraction(3602879701896397, 36028797018963968))
        self.assertEqual(read_number(-2.5, Fraction), Fraction(-5, 2))
        self.assertEqual(read_number(-0.0), 0.0)

    def test_an_integer_token_is_read_as_a_float(self):
        # 2^53 + 1 has no double; round to nearest, ties to even, gives 2^53.
        self.assertEqual(read_number(9007199254740993), 9007199254740992.0)
        self.assertIs(type(read_number(9007199254740993)), float)
        self.assertEqual(read_number(9007199254740993, Fraction), Fraction(2 ** 53))
        self.assertEqual(read_number(3, Fraction), Fraction(3))

    def test_what_is_not_a_finite_number_is_refused(self):
        for bad in [float("nan"), float("inf"), -float("inf"), True, "1.0", None, [1.0],
                    10 ** 400]:
            with self.subTest(bad=bad), self.assertRaises(NumberError):
                read_number(bad)
        with self.assertRaisesRegex(NumberError, "offset: expected a number"):
            read_number("x", what="offset")

    def test_the_caller_chooses_float_or_fraction_only(self):
        with self.assertRaises(TypeError):
            read_number(1.0, int)


class ExactNumbers(unittest.TestCase):
    def test_exact_numbers_give_the_fraction_or_the_nearest_float(self):
        third = exact("1/3", 0.3333333333333333)
        self.assertEqual(read_number(third, Fraction), Fraction(1, 3))
        self.assertEqual(read_number(third), 0.3333333333333333)
        # The first-order value of the README's protocol example.
        value = exact("-24229210626892415/144115188075855872", -0.16812392191542802)
        self.assertEqual(read_number(value, Fraction),
                         Fraction(-24229210626892415, 144115188075855872))
        self.assertEqual(read_number(value), -0.16812392191542802)
        # An integer in the exact shape, and lowest terms not required.
        self.assertEqual(read_number(exact("-7", -7.0), Fraction), -7)
        self.assertEqual(read_number(exact("2/6", 0.3333333333333333), Fraction), Fraction(1, 3))

    def test_approx_must_be_the_nearest_float(self):
        with self.assertRaisesRegex(NumberError, "not the float nearest"):
            read_number(exact("1/3", 0.5))
        # One ulp off is off.
        with self.assertRaises(NumberError):
            read_number(exact("1/3", 0.33333333333333337))

    def test_the_grammar_of_exact_text(self):
        for text in ["+1/3", " 1/3", "1 /3", "1/3 ", "1.5", "1e3", "1_000", "/3", "1/", "",
                     "--1", "1/-3", "\u0661/\u0663", "0x10", "1/3/5"]:
            with self.subTest(text=text), self.assertRaisesRegex(NumberError, "is not"):
                read_number(exact(text, 0.0))
        with self.assertRaisesRegex(NumberError, "denominator"):
            read_number(exact("1/0", 0.0))
        with self.assertRaisesRegex(NumberError, "exactly the keys"):
            read_number({"exact": "1/3"})
        with self.assertRaisesRegex(NumberError, "exactly the keys"):
            read_number({"exact": "1/3", "approx": 0.3333333333333333, "note": 1})
        with self.assertRaisesRegex(NumberError, "must be text"):
            read_number({"exact": 1, "approx": 1.0})

    def test_digit_and_magnitude_limits(self):
        big = "1" + "0" * 4095  # 4096 digits: allowed
        self.assertEqual(read_number(exact(big + "/" + big, 1.0), Fraction), 1)
        with self.assertRaisesRegex(NumberError, "at most 4096 digits"):
            read_number(exact("1" + big, 1.0))
        with self.assertRaisesRegex(NumberError, "at most 4096 digits"):
            read_number(exact("1/1" + big, 0.0))
        # At 2^1024 - 2^970 and above the nearest double is infinite; just below it is
        # the largest finite double.
        edge = 2 ** 1024 - 2 ** 970
        with self.assertRaisesRegex(NumberError, "2\\^1024"):
            read_number(exact(str(edge), MAX_FLOAT))
        with self.assertRaisesRegex(NumberError, "2\\^1024"):
            read_number(exact("-" + str(edge), -MAX_FLOAT))
        self.assertEqual(read_number(exact(str(edge - 1), MAX_FLOAT)), MAX_FLOAT)


class Normals(unittest.TestCase):
    def test_an_axis_normal_is_sign_times_a_unit_vector(self):
        normal = {"axis": 2, "sign": -1}
        self.assertEqual(read_normal(normal, 3), [0.0, 0.0, -1.0])
        self.assertEqual(read_normal(normal, 3, Fraction), [0, 0, Fraction(-1)])
        self.assertIs(type(read_normal(normal, 3, Fraction)[0]), Fraction)
        self.assertEqual(axis_of(normal, 3), (2, -1))
        self.assertIsNone(axis_of([1.0, 0.0], 2))

    def test_a_dense_normal_holds_numbers(self):
        self.assertEqual(read_normal([0.5, -1, 0.1], 3), [0.5, -1.0, 0.1])
        self.assertEqual(read_normal([0.5, -1, 0.1], 3, Fraction),
                         [Fraction(1, 2), Fraction(-1), Fraction(0.1)])
        third = exact("1/3", 0.3333333333333333)
        self.assertEqual(read_normal([third, 0.0], 2, Fraction), [Fraction(1, 3), 0])

    def test_bad_normals_are_refused(self):
        cases = [
            ({"axis": 3, "sign": 1}, 3, "axis 3"),
            ({"axis": -1, "sign": 1}, 3, "axis -1"),
            ({"axis": 0.0, "sign": 1}, 3, "axis 0.0"),
            ({"axis": 0, "sign": 2}, 3, "sign 2"),
            ({"axis": 0, "sign": True}, 3, "sign True"),
            ({"axis": 0, "sign": 1.0}, 3, "sign 1.0"),
            ({"axis": 0}, 3, "exactly the keys"),
            ([1.0, 2.0], 3, "expected 3 numbers, got 2"),
            ([1.0, exact("1/3", 0.5)], 2, "not the float nearest"),
            ([1.0, None], 2, "normal\\[1\\]: expected a number"),
            ("1,0", 2, "expected an array"),
        ]
        for normal, dim, message in cases:
            with self.subTest(normal=normal), self.assertRaisesRegex(NumberError, message):
                read_normal(normal, dim)

    def test_vectors_of_either_shape(self):
        values = [0.25, exact("1/3", 0.3333333333333333)]
        self.assertEqual(read_numbers(values), [0.25, 0.3333333333333333])
        self.assertEqual(read_numbers(values, Fraction), [Fraction(1, 4), Fraction(1, 3)])
        with self.assertRaisesRegex(NumberError, "expected 3 numbers"):
            read_numbers(values, dim=3)
        with self.assertRaisesRegex(NumberError, "subgradient\\[1\\]"):
            read_numbers([0.0, None], what="subgradient")


if __name__ == "__main__":
    unittest.main()
