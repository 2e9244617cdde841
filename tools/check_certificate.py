#!/usr/bin/env python3
"""An independent re-check of naysayer lower-bound certificates.

Usage: python3 tools/check_certificate.py TRANSCRIPT.jsonl

Reads one transcript and re-checks, in exact rational arithmetic (fractions.Fraction,
no floating-point comparison, square roots decided by squaring with the sign checked
first), every claim the certificate makes. Written from the documented format (README
"Transcript format", rustdoc of naysayer::transcript) and the mathematics (THEORY.md
sections 0, 1, 2 and 4); it shares no code with the Rust verifier. Python 3 standard
library only.

Understands exactly: transcript format 1 (the header's "format") and certificate
schema 1 (the final record's certificate "schema"; a certificate without the key was
written before the key existed and is schema 1). Any other version is refused.

Claims checked, by class:
- all classes: records in order (header, queries numbered 1..T, final); every number
  finite; exact numbers {"exact": "p/q", "approx": f} with approx the nearest float;
  the class parameters valid; the certified prefix T* at most the queries used; the
  final record's counts match the file.
- separation (feasibility, THEORY.md 1): every cut {a.y < b} excludes its own query
  (a.x >= b); every witness (the empty set, or a closed ball of radius rho inside the
  box) agrees with every answer of the prefix: a ball lies strictly inside a cut iff
  b - a.c > 0 and rho^2 |a|^2 < (b - a.c)^2, an `inside` query lies in the ball; and
  either the witnesses' correct outputs are pairwise disjoint, or T* covers the whole
  game and some witness refutes the method's output.
- first-order (THEORY.md 2): every subgradient has dual norm at most L; each witness
  f(y) = max(max_p [s_p.y + i_p], floor + sigma |y - c|_inf) has its centre in the box,
  0 < sigma <= L, every piece within L in the dual norm and at most floor at c (so f
  is convex, L-Lipschitz, with minimum floor at c, and {f <= floor + eps} lies in
  c + (eps/sigma) B_inf); f reproduces every answer of the prefix exactly (the answer's
  own affine piece is one of f's pieces and f(x_t) = v_t, which also makes the answers
  pairwise consistent: v_s + g_s.(x_t - x_s) <= v_t); and either the centres are far
  enough apart (|c_A - c_B|_inf > eps/sigma_A + eps/sigma_B for every pair) or T* covers
  the game and some witness has f(output) > floor + eps. Reports eps_cert = min over
  pairs of |c_A - c_B|_inf / (1/sigma_A + 1/sigma_B), rounded down to a float.
- lattice and mixed-integer (THEORY.md 4): each witness conv(F cup {v} x B(c, rho)) lies
  in the box, no point of F is mixed-integer, and the integer parts of F and v lie in
  one closed unit cube (then a lattice point of the hull is a cube vertex, a convex
  combination only of points with that integer part, so the hull's mixed-integer points
  are exactly the fibre ball, or none); every cut of the prefix strictly contains each
  point of F and the fibre ball (only the continuous part of the normal enters the
  norm); and the correct outputs are pairwise disjoint or the output is refuted.

Prints one verdict line. Exit 0: every claim holds; 1: the transcript is rejected (a
claim fails, the file is malformed, or its version is not understood); 2: bad usage or
the file cannot be read.
"""
import json
import math
import sys
from fractions import Fraction

FORMAT = 1
SCHEMAS = (1,)
F = Fraction


class Reject(Exception):
    def __init__(self, line, reason):
        super().__init__(reason)
        self.line, self.reason = line, reason


def fail(line, reason):
    raise Reject(line, reason)


# ---- reading values --------------------------------------------------------------

def is_int(v):
    return isinstance(v, int) and not isinstance(v, bool)


def field(obj, key, line, what):
    if not isinstance(obj, dict) or key not in obj:
        fail(line, f"{what}: missing field {key!r}")
    return obj[key]


def integer(v, line, what, low=0, high=2 ** 64 - 1):
    if not is_int(v) or not low <= v <= high:
        fail(line, f"{what}: expected a whole number in [{low}, {high}], found {v!r}")
    return v


def real(v, line, what):
    """A number field holding a float: its exact value."""
    if is_int(v) or (isinstance(v, float) and math.isfinite(v)):
        return F(v)
    fail(line, f"{what}: expected a finite number, found {v!r}")


def exact(v, line, what):
    """A number the adversary computed: a float, or {"exact": "p/q", "approx": f}."""
    if isinstance(v, dict):
        if set(v) != {"exact", "approx"} or not isinstance(v["exact"], str):
            fail(line, f"{what}: an exact number needs exactly 'exact' (text) and 'approx'")
        try:
            q = F(v["exact"])
            near = float(q)
        except (ValueError, ZeroDivisionError, OverflowError):
            fail(line, f"{what}: {v['exact']!r} is not a rational number")
        if real(v["approx"], line, what) != F(near):
            fail(line, f"{what}: approx {v['approx']!r} is not the nearest float to {v['exact']}")
        return q
    return real(v, line, what)


def vector(v, n, line, what, reader=real):
    if not isinstance(v, list) or len(v) != n:
        fail(line, f"{what}: expected a list of {n} numbers")
    return [reader(x, line, what) for x in v]


def no_constants(name):
    raise ValueError(f"{name} is not a JSON number")


def finite_float(text):
    x = float(text)
    if not math.isfinite(x):
        raise ValueError(f"{text} is out of range")
    return x


# ---- the classes -----------------------------------------------------------------

def parse_class(c):
    kind = field(c, "kind", 1, "class")
    def positive(key, top=1e300):
        x = real(field(c, key, 1, "class"), 1, key)
        if not (0 < x <= F(top)):
            fail(1, f"class: {key} = {float(x)} must be positive and at most {top}")
        return x
    def normal_positive(key):
        x = positive(key, sys.float_info.max)
        if x < F(sys.float_info.min):
            fail(1, f"class: {key} must be a normal float")
        return x
    if kind in ("feasibility", "first-order"):
        d = integer(field(c, "dim", 1, "class"), 1, "class dim", 1, 10 ** 6)
        cls = {"kind": kind, "d": d, "dim": d, "R": positive("half_width")}
        if kind == "feasibility":
            cls["rho"] = normal_positive("rho")
            if cls["rho"] >= cls["R"]:
                fail(1, "class: rho must be smaller than the half-width")
            cls["promise"] = field(c, "promise", 1, "class")
            if cls["promise"] not in ("may-be-empty", "nonempty"):
                fail(1, f"class: unknown promise {cls['promise']!r}")
        else:
            cls["eps"], cls["L"] = normal_positive("eps"), positive("lipschitz")
            cls["norm"] = field(c, "norm", 1, "class")
            if cls["norm"] not in ("l1", "l2", "linf"):
                fail(1, f"class: unknown norm {cls['norm']!r}")
        return cls
    if kind == "lattice":
        lo, up = field(c, "lower", 1, "class"), field(c, "upper", 1, "class")
        if not isinstance(lo, list) or not isinstance(up, list) or not 1 <= len(lo) <= 64 \
                or len(up) != len(lo):
            fail(1, "class: lower and upper must be lists of 1 to 64 integer bounds")
        lo = [integer(v, 1, "lower", -2 ** 40, 2 ** 40) for v in lo]
        up = [integer(v, 1, "upper", -2 ** 40, 2 ** 40) for v in up]
        if any(a > b for a, b in zip(lo, up)):
            fail(1, "class: a lower integer bound exceeds its upper bound")
        d = integer(field(c, "cont_dim", 1, "class"), 1, "cont_dim", 0, 10 ** 6)
        cls = {"kind": kind, "lo": lo, "up": up, "n": len(lo), "d": d,
               "dim": len(lo) + d, "R": positive("half_width"), "rho": normal_positive("rho")}
        if d > 0 and cls["rho"] >= cls["R"]:
            fail(1, "class: rho must be smaller than the half-width")
        return cls
    fail(1, f"class: unknown kind {kind!r}")


def dot(a, x):
    return sum((ai * xi for ai, xi in zip(a, x) if ai), F(0))


def dual_norm_ok(g, cls):
    """||g||_* <= L in the dual of the class's norm."""
    L, norm = cls["L"], cls["norm"]
    if norm == "l1":
        return all(abs(v) <= L for v in g)
    if norm == "l2":
        return sum(v * v for v in g) <= L * L
    return sum(abs(v) for v in g) <= L


def ball_in_box(c, r, R):
    return all(-R <= ci - r and ci + r <= R for ci in c)


def in_ball(x, c, r):
    return sum((xi - ci) ** 2 for xi, ci in zip(x, c)) <= r * r


def ball_strictly_below(a, b, c, r):
    """B(c, r) inside the open half-space {a.y < b}: s = b - a.c > 0, r^2|a|^2 < s^2."""
    s = b - dot(a, c)
    return s > 0 and r * r * sum(ai * ai for ai in a) < s * s


def parse_witness(w, cls, line, k):
    what = f"witness #{k}"
    kind = field(w, "kind", line, what)
    if kind == "empty":
        if cls["kind"] == "first-order":
            fail(line, f"{what}: the empty set is not a function")
        if cls.get("promise") == "nonempty":
            fail(line, f"{what}: the class promises a nonempty K")
        return {"kind": "empty"}
    if kind == "ball" and cls["kind"] == "feasibility":
        c = vector(field(w, "center", line, what), cls["d"], line, what, exact)
        r = real(field(w, "radius", line, what), line, what)
        if r != cls["rho"]:
            fail(line, f"{what}: radius differs from rho")
        if not ball_in_box(c, r, cls["R"]):
            fail(line, f"{what}: the ball leaves the box")
        return {"kind": "ball", "c": c, "r": r}
    if kind == "function" and cls["kind"] == "first-order":
        d = cls["d"]
        c = vector(field(w, "center", line, what), d, line, what, exact)
        floor = exact(field(w, "floor", line, what), line, what)
        sigma = exact(field(w, "slope", line, what), line, what)
        if any(abs(ci) > cls["R"] for ci in c):
            fail(line, f"{what}: the centre lies outside the box")
        if not 0 < sigma <= cls["L"]:
            fail(line, f"{what}: the cone slope must lie in (0, L]")
        raw, pieces = field(w, "pieces", line, what), []
        if not isinstance(raw, list):
            fail(line, f"{what}: pieces must be a list")
        for p in raw:
            s = vector(field(p, "slope", line, what), d, line, what, exact)
            pieces.append((tuple(s), exact(field(p, "intercept", line, what), line, what)))
        for j, (s, i) in enumerate(pieces):
            if not dual_norm_ok(s, cls):
                fail(line, f"{what}: piece {j + 1} is steeper than L in the dual norm")
            if dot(s, c) + i > floor:
                fail(line, f"{what}: piece {j + 1} exceeds the floor at the centre")
        terms = [([(m, v) for m, v in enumerate(s) if v], i) for s, i in pieces]
        return {"kind": "function", "c": c, "floor": floor, "sigma": sigma,
                "keys": set(pieces), "terms": terms}
    if kind == "lattice-hull" and cls["kind"] == "lattice":
        n, d, R = cls["n"], cls["d"], cls["R"]
        pts = field(w, "points", line, what)
        if not isinstance(pts, list):
            fail(line, f"{what}: points must be a list")
        points = [vector(p, cls["dim"], line, what) for p in pts]
        for p in points:
            if any(not lo <= v <= up for v, lo, up in zip(p, cls["lo"], cls["up"])) or \
                    any(abs(v) > R for v in p[n:]):
                fail(line, f"{what}: a generating point lies outside the box")
            if all(v.denominator == 1 for v in p[:n]):
                fail(line, f"{what}: a generating point is itself mixed-integer")
        fib = field(w, "fibre", line, what)
        fibre = None
        if fib is not None:
            ints = field(fib, "integer", line, what)
            if not isinstance(ints, list) or len(ints) != n:
                fail(line, f"{what}: the fibre's integer part has the wrong length")
            v = [integer(z, line, what, -2 ** 63, 2 ** 63 - 1) for z in ints]
            if any(not lo <= z <= up for z, lo, up in zip(v, cls["lo"], cls["up"])):
                fail(line, f"{what}: the fibre's integer part lies outside the box")
            c = vector(field(fib, "center", line, what), d, line, what, exact)
            if real(field(fib, "radius", line, what), line, what) != cls["rho"]:
                fail(line, f"{what}: the fibre radius differs from rho")
            if not ball_in_box(c, cls["rho"], R):
                fail(line, f"{what}: the fibre ball leaves the box")
            fibre = ([F(z) for z in v], c)
        # Unit-cube condition on the integer parts (see the module docstring).
        parts = [p[:n] for p in points] + ([fibre[0]] if fibre else [])
        for i in range(n):
            col = [p[i] for p in parts]
            if col and max(col) > math.floor(min(col)) + 1:
                fail(line, f"{what}: the integer parts do not lie in one unit cube, so the "
                           "hull's mixed-integer points are not shown to be its fibre ball")
        return {"kind": "hull", "points": points, "fibre": fibre, "n": n, "r": cls["rho"]}
    fail(line, f"{what}: a {kind!r} witness is not an instance of this class")


# ---- what each witness says about answers and outputs ----------------------------

def agrees(w, x, ans, cls):
    """Does witness w agree with answer ans to query x (x exact)?"""
    k = w["kind"]
    if k == "function":
        v, g = ans
        if (tuple(g), v - dot(g, x)) not in w["keys"]:
            return False
        if any(sum((s * x[m] for m, s in t), i) > v for t, i in w["terms"]):
            return False
        return w["floor"] + w["sigma"] * max(abs(a - b) for a, b in zip(x, w["c"])) <= v
    if ans == "inside":
        if k == "ball":
            return in_ball(x, w["c"], w["r"])
        return k == "hull" and (any(p == x for p in w["points"]) or in_fibre(w, x))
    a, b = ans
    if k == "empty":
        return True
    if k == "ball":
        return ball_strictly_below(a, b, w["c"], w["r"])
    if any(dot(a, p) >= b for p in w["points"]):
        return False
    if w["fibre"] is None:
        return True
    n = w["n"]
    v, c = w["fibre"]
    return ball_strictly_below(a[n:], b - dot(a[:n], v), c, w["r"])


def in_fibre(w, x):
    if w["fibre"] is None:
        return False
    v, c = w["fibre"]
    return x[:w["n"]] == v and in_ball(x[w["n"]:], c, w["r"])


def solutions(w):
    """A key for the witness's set of correct outputs: None means the output "empty"."""
    if w["kind"] == "empty" or (w["kind"] == "hull" and w["fibre"] is None):
        return None
    return w


def disjoint(u, w, cls):
    if cls["kind"] == "first-order":
        gap = max(abs(a - b) for a, b in zip(u["c"], w["c"]))
        return gap > cls["eps"] / u["sigma"] + cls["eps"] / w["sigma"]
    su, sw = solutions(u), solutions(w)
    if su is None or sw is None:
        return (su is None) != (sw is None)
    if u["kind"] == "ball":
        ca, cb = u["c"], w["c"]
    else:
        if u["fibre"][0] != w["fibre"][0]:
            return True
        ca, cb = u["fibre"][1], w["fibre"][1]
        if not ca:
            return False
    return sum((a - b) ** 2 for a, b in zip(ca, cb)) > 4 * u["r"] * u["r"]


def refutes(w, output, cls):
    """Is the method's output wrong for instance w?"""
    if cls["kind"] == "first-order":
        if output == "empty":
            return False
        x = output
        top = w["floor"] + w["sigma"] * max(abs(a - b) for a, b in zip(x, w["c"]))
        for t, i in w["terms"]:
            top = max(top, sum((s * x[m] for m, s in t), i))
        return top > w["floor"] + cls["eps"]
    if output == "empty":
        return solutions(w) is not None
    if cls["kind"] == "lattice":
        if any(v.denominator != 1 for v in output[:cls["n"]]):
            return True
        return not (w["kind"] == "hull" and in_fibre(w, output))
    return w["kind"] == "empty" or not in_ball(output, w["c"], w["r"])


# ---- the transcript ----------------------------------------------------------------

def parse_answer(a, cls, line, index):
    what = f"answer {index}"
    kind = field(a, "kind", line, what)
    d = cls["dim"]
    if cls["kind"] == "first-order":
        if kind != "first-order":
            fail(line, f"{what}: a separation answer in a first-order transcript")
        g = vector(field(a, "subgradient", line, what), d, line, what, exact)
        if not dual_norm_ok(g, cls):
            fail(line, f"{what}: the subgradient is longer than L in the dual norm")
        return (exact(field(a, "value", line, what), line, what), g)
    if kind == "inside":
        return "inside"
    if kind != "cut":
        fail(line, f"{what}: a {kind!r} answer in a separation transcript")
    nrm = field(a, "normal", line, what)
    if isinstance(nrm, dict):
        axis = integer(field(nrm, "axis", line, what), line, what)
        sign = integer(field(nrm, "sign", line, what), line, what, -128, 127)
        if axis >= d or sign not in (1, -1):
            fail(line, f"{what}: bad axis normal")
        nrm = [F(sign) if i == axis else F(0) for i in range(d)]
    else:
        nrm = vector(nrm, d, line, what)
        if not any(nrm):
            fail(line, f"{what}: the cut normal is zero")
    return (nrm, exact(field(a, "offset", line, what), line, what))


def check(text):
    lines = text.split("\n")
    if lines and lines[-1] == "":
        lines.pop()
    if not lines:
        fail(1, "the file is empty")
    records = []
    for no, raw in enumerate(lines, 1):
        try:
            rec = json.loads(raw.rstrip("\r"), parse_float=finite_float,
                             parse_constant=no_constants)
        except ValueError as e:
            fail(no, f"not a complete JSON record (truncated?): {e}")
        if not isinstance(rec, dict) or rec.get("type") not in ("header", "query", "final") \
                or not isinstance(rec.get("data"), dict):
            fail(no, "not a record {\"type\": header|query|final, \"data\": {...}}")
        records.append((no, rec["type"], rec["data"]))
    if records[0][1] != "header":
        fail(1, "record out of order: the first record must be the header")
    if records[-1][1] != "final":
        fail(records[-1][0], "the transcript ends without a final record (truncated?)")
    for no, kind, _ in records[1:-1]:
        if kind != "query":
            fail(no, f"record out of order: a {kind} record between the queries")
    head = records[0][2]
    version = field(head, "format", 1, "header")
    if version != FORMAT or not is_int(version):
        fail(1, f"transcript format {version!r} is not understood (this checker reads {FORMAT})")
    for key in ("tool", "adversary", "method"):
        if not isinstance(field(head, key, 1, "header"), str):
            fail(1, f"header: {key} must be text")
    for key in ("seed", "budget"):
        integer(field(head, key, 1, "header"), 1, f"header {key}")
    cls = parse_class(field(head, "class", 1, "header"))
    budget = head["budget"]

    last, _, fin = records[-1]
    used = integer(field(fin, "queries_used", last, "final"), last, "queries_used")
    if used != len(records) - 2:
        fail(last, f"the final record says {used} queries were used, the file holds "
                   f"{len(records) - 2}")
    ending = field(fin, "ending", last, "final")
    ekind = field(ending, "kind", last, "ending")
    output = None
    if ekind == "output":
        out = field(ending, "output", last, "ending")
        okind = field(out, "kind", last, "output")
        if okind == "empty":
            output = "empty"
        elif okind == "point":
            output = vector(field(out, "point", last, "output"), cls["dim"], last, "output")
        else:
            fail(last, f"unknown output {okind!r}")
    elif ekind == "budget-exhausted":
        if used != budget:
            fail(last, f"the budget ended the game after {used} queries, but the budget is "
                       f"{budget}")
    elif ekind == "method-failed":
        if not isinstance(field(ending, "reason", last, "ending"), str):
            fail(last, "method-failed needs a reason")
    else:
        fail(last, f"unknown ending {ekind!r}")
    cert = field(fin, "certificate", last, "final")
    schema, prefix, witnesses = None, 0, []
    if cert is not None:
        schema = cert.get("schema", 1) if isinstance(cert, dict) else None
        if schema not in SCHEMAS or not is_int(schema):
            fail(last, f"certificate schema {schema!r} is not understood (this checker reads "
                       f"{', '.join(map(str, SCHEMAS))})")
        prefix = integer(field(cert, "prefix", last, "certificate"), last, "prefix")
        if prefix > used:
            fail(last, f"the certificate claims prefix {prefix}, more than the {used} queries")
        inst = field(cert, "instances", last, "certificate")
        if not isinstance(inst, list):
            fail(last, "instances must be a list")
        witnesses = [parse_witness(w, cls, last, k + 1) for k, w in enumerate(inst)]

    for t, (no, _, q) in enumerate(records[1:-1], 1):
        index = field(q, "index", no, "query")
        if not is_int(index) or index != t:
            fail(no, f"record out of order: expected query {t}, found {q['index']!r}")
        x = vector(field(q, "point", no, f"query {t}"), cls["dim"], no, f"query {t}")
        ans = parse_answer(field(q, "answer", no, f"query {t}"), cls, no, t)
        if isinstance(ans, tuple) and cls["kind"] != "first-order" and dot(ans[0], x) < ans[1]:
            fail(no, f"answer {t}: the query lies on the kept side of its own cut (a.x < b)")
        if t <= prefix:
            for k, w in enumerate(witnesses, 1):
                if not agrees(w, x, ans, cls):
                    fail(no, f"answer {t}: witness #{k} ({w['kind']}) does not agree with it")

    full = cert is not None and prefix == used
    refuted = output is not None and full and any(refutes(w, output, cls) for w in witnesses)
    if cert is not None:
        apart = len(witnesses) >= 2 and all(
            disjoint(witnesses[i], witnesses[j], cls)
            for i in range(len(witnesses)) for j in range(i + 1, len(witnesses)))
        if cls["kind"] == "first-order" and output == "empty":
            refuted = False
        if not apart and not refuted:
            fail(last, "the witnesses' correct outputs are not pairwise disjoint, and no "
                       "witness refutes the method's output on the whole game")
    if ekind == "budget-exhausted":
        outcome = "budget-exhausted"
    elif ekind == "method-failed" or (cls["kind"] == "first-order" and output == "empty"):
        outcome = "method-failed"
    elif output == "empty" and cls.get("promise") == "nonempty":
        outcome = "empty-breaks-promise"
    elif refuted:
        outcome = "empty-refuted" if output == "empty" else "output-refuted"
    else:
        outcome = "output-stands"
    eps_cert = "none"
    if cls["kind"] == "first-order" and cert is not None and len(witnesses) >= 2:
        best = min(max(abs(a - b) for a, b in zip(u["c"], w["c"])) /
                   (1 / u["sigma"] + 1 / w["sigma"])
                   for i, u in enumerate(witnesses) for w in witnesses[i + 1:])
        down = float(best)
        if F(down) > best:
            down = math.nextafter(down, -math.inf)
        eps_cert = repr(down)
    bound = "none" if cert is None else str(prefix + 1)
    return (f"class={cls['kind']} format={FORMAT} schema={schema or '-'} queries_used={used} "
            f"censored={'yes' if ekind == 'budget-exhausted' else 'no'} "
            f"certified_lower_bound={bound} outcome={outcome} certified_uncertainty={eps_cert}")


def main(argv):
    if len(argv) != 2 or argv[1].startswith("-"):
        print("usage: check_certificate.py TRANSCRIPT.jsonl", file=sys.stderr)
        return 2
    path = argv[1]
    try:
        with open(path, "rb") as f:
            data = f.read()
    except OSError as e:
        print(f"UNREADABLE {path}: {e}")
        return 2
    try:
        try:
            text = data.decode("utf-8")
        except UnicodeDecodeError as e:
            fail(data[:e.start].count(b"\n") + 1, "not valid UTF-8")
        verdict = check(text)
    except Reject as r:
        print(f"REJECTED {path}: line {r.line}: {r.reason}")
        return 1
    print(f"VALID {path}: {verdict}")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
