#!/usr/bin/env python3
"""An independent re-check of naysayer lower-bound certificates (Python 3 stdlib only).

Usage: python3 tools/check_certificate.py TRANSCRIPT.jsonl [MORE.jsonl ...]

Reads exactly transcript format 1 (header "format") and certificate schema 1 (final
record "certificate.schema"; absent = 1, from before the key existed); refuses others.
Written from the documented format (README, rustdoc of naysayer::transcript) and docs/theory.md
§0, §1, §2, §4, sharing no code with the Rust verifier. Every comparison is exact (Fraction
over the stored numbers; square roots by squaring with the sign checked; no tolerance).

Claims: records in order; numbers finite, {"exact": "p/q", "approx": f} with f nearest;
valid class; T* <= queries used; counts match; every answer of the certified prefix T*
agrees with every witness; the witnesses' correct outputs are pairwise disjoint, or T*
covers the game and a witness refutes the output. Per class:
- separation: cuts {a.y < b} exclude their query (a.x >= b); a witness is the empty set
  or a closed rho-ball in the box, inside a cut iff s = b - a.c > 0 and rho^2|a|^2 < s^2.
- first-order: subgradients within L (dual norm); a witness max(pieces, floor + sigma
  |y - c|_inf) has c in the box, 0 < sigma <= L, pieces within L and <= floor at c (so
  convex, L-Lipschitz, minimal at c, {f <= floor + eps} in c + (eps/sigma) B_inf); it
  reproduces each answer (own affine piece is a piece, f(x_t) = v_t; hence pairwise
  consistency v_s + g_s.(x_t - x_s) <= v_t); centres apart: |c_A - c_B|_inf > eps/sigma_A
  + eps/sigma_B. Prints eps_cert = min |c_A - c_B|_inf / (1/sigma_A + 1/sigma_B), rounded
  down to a float.
- lattice: a witness conv(F cup {v} x B(c, rho)) lies in the box, F has no mixed-integer
  point, the integer parts of F and v lie in one unit cube (a lattice point of the hull is
  then a cube vertex, a combination of points with that integer part only: the hull's
  mixed-integer points are exactly the fibre ball); a cut holds it iff it holds F
  strictly and the fibre ball (only the continuous part of the normal in the norm).

One verdict line per file. Exit 0: every claim holds; 1: rejected (a claim fails, the
file is malformed, or its version is unknown); 2: bad usage or unreadable file (several
files: the largest code).
"""
import json
import math
import sys
from fractions import Fraction as F

FORMAT, SCHEMAS = 1, (1,)
AT = [1]  # the line being checked, for messages

class Reject(Exception):  # (line, reason)
    pass

def fail(reason, line=None):
    raise Reject(line or AT[0], reason)

def is_int(v):
    return isinstance(v, int) and not isinstance(v, bool)

def get(obj, key, what):
    if not isinstance(obj, dict) or key not in obj:
        fail(f"{what}: missing field {key!r}")
    return obj[key]

def integer(v, what, low=0, high=2 ** 64 - 1):
    if not is_int(v) or not low <= v <= high:
        fail(f"{what}: expected a whole number in [{low}, {high}], found {v!r}")
    return v

def real(v, what):
    """A field holding a float: its exact value."""
    if is_int(v) or (isinstance(v, float) and math.isfinite(v)):
        return F(v)
    fail(f"{what}: expected a finite number, found {v!r}")

def exact(v, what):
    """A number the adversary computed: a float, or {"exact": "p/q", "approx": f}."""
    if not isinstance(v, dict):
        return real(v, what)
    if set(v) != {"exact", "approx"} or not isinstance(v["exact"], str):
        fail(f"{what}: an exact number needs exactly 'exact' (text) and 'approx'")
    try:
        q = F(v["exact"])
        near = F(float(q))
    except (ValueError, ZeroDivisionError, OverflowError):
        fail(f"{what}: {v['exact']!r} is not a rational number")
    if real(v["approx"], what) != near:
        fail(f"{what}: approx {v['approx']!r} is not the nearest float to {v['exact']}")
    return q

def vector(v, n, what, read=real):
    if not isinstance(v, list) or len(v) != n:
        fail(f"{what}: expected a list of {n} numbers")
    return [read(x, what) for x in v]

def finite_float(text):  # also called on NaN and Infinity, which JSON does not allow
    if not math.isfinite(x := float(text)):
        raise ValueError(f"{text} is not a finite number")
    return x

def parse_class(c):
    kind = get(c, "kind", "class")

    def positive(key, top=1e300, normal=False):
        x = real(get(c, key, "class"), key)
        if not 0 < x <= F(top) or (normal and x < F(sys.float_info.min)):
            fail(f"class: {key} must be a positive {'normal ' * normal}float at most {top}")
        return x
    cls = {"kind": kind, "R": positive("half_width")}
    if kind in ("feasibility", "first-order"):
        cls["d"] = cls["dim"] = integer(get(c, "dim", "class"), "dim", 1, 10 ** 6)
        if kind == "feasibility":
            cls["rho"], cls["promise"] = positive("rho", normal=True), get(c, "promise", "class")
            if cls["promise"] not in ("may-be-empty", "nonempty") or cls["rho"] >= cls["R"]:
                fail("class: unknown promise, or rho not below the half-width")
        else:
            cls["eps"] = positive("eps", sys.float_info.max, normal=True)
            cls["L"], cls["norm"] = positive("lipschitz"), get(c, "norm", "class")
            if cls["norm"] not in ("l1", "l2", "linf"):
                fail(f"class: unknown norm {cls['norm']!r}")
        return cls
    if kind != "lattice":
        fail(f"class: unknown kind {kind!r}")
    lo, up = get(c, "lower", "class"), get(c, "upper", "class")
    if not isinstance(lo, list) or not isinstance(up, list) or not 1 <= len(lo) == len(up) <= 64:
        fail("class: lower and upper must be lists of 1 to 64 integer bounds")
    lo = [integer(v, "lower", -2 ** 40, 2 ** 40) for v in lo]
    up = [integer(v, "upper", -2 ** 40, 2 ** 40) for v in up]
    d = integer(get(c, "cont_dim", "class"), "cont_dim", 0, 10 ** 6)
    cls.update(lo=lo, up=up, n=len(lo), d=d, dim=len(lo) + d, rho=positive("rho", normal=True))
    if any(a > b for a, b in zip(lo, up)) or (d > 0 and cls["rho"] >= cls["R"]):
        fail("class: a lower bound exceeds its upper bound, or rho is not below R")
    return cls

def dot(a, x):
    return sum((ai * xi for ai, xi in zip(a, x) if ai), F(0))

def dual_norm_ok(g, cls):
    """||g||_* <= L: max |g_i| (Lipschitz in l1), |g|_2 (in l2), sum |g_i| (in l_inf)."""
    a, L = [abs(v) for v in g], cls["L"]
    if cls["norm"] == "l2":
        return sum(v * v for v in a) <= L * L
    return (max(a, default=0) if cls["norm"] == "l1" else sum(a)) <= L

def ball_in_box(c, r, R):
    return all(-R <= ci - r and ci + r <= R for ci in c)

def in_ball(x, c, r):
    return sum((xi - ci) ** 2 for xi, ci in zip(x, c)) <= r * r

def ball_strictly_below(a, b, c, r):
    """B(c, r) inside the open half-space {a.y < b}: s = b - a.c > 0, r^2|a|^2 < s^2."""
    s = b - dot(a, c)
    return s > 0 and r * r * sum(ai * ai for ai in a) < s * s

def linf(x, c):
    return max(abs(a - b) for a, b in zip(x, c))

def fvalue(w, x):
    """The exact value of a function witness at x."""
    top = w["floor"] + w["sigma"] * linf(x, w["c"])
    return max([top] + [sum((s * x[m] for m, s in t), i) for t, i in w["terms"]])

def parse_witness(w, cls, k):
    what, kind, d = f"witness #{k}", get(w, "kind", f"witness #{k}"), cls["d"]
    if kind == "empty" and cls["kind"] != "first-order":
        if cls.get("promise") == "nonempty":
            fail(f"{what}: the class promises a nonempty K")
        return {"kind": "empty"}
    if kind == "ball" and cls["kind"] == "feasibility":
        c = vector(get(w, "center", what), d, what, exact)
        r = real(get(w, "radius", what), what)
        if r != cls["rho"] or not ball_in_box(c, r, cls["R"]):
            fail(f"{what}: the radius is not rho, or the ball leaves the box")
        return {"kind": "ball", "c": c, "r": r}
    if kind == "function" and cls["kind"] == "first-order":
        c = vector(get(w, "center", what), d, what, exact)
        floor, sigma = exact(get(w, "floor", what), what), exact(get(w, "slope", what), what)
        if any(abs(ci) > cls["R"] for ci in c) or not 0 < sigma <= cls["L"]:
            fail(f"{what}: the centre lies outside the box, or the cone slope is not in (0, L]")
        raw = get(w, "pieces", what)
        if not isinstance(raw, list):
            fail(f"{what}: pieces must be a list")
        pieces = [(tuple(vector(get(p, "slope", what), d, what, exact)),
                   exact(get(p, "intercept", what), what)) for p in raw]
        for j, (s, i) in enumerate(pieces, 1):
            if not dual_norm_ok(s, cls) or dot(s, c) + i > floor:
                fail(f"{what}: piece {j} is steeper than L in the dual norm or exceeds the "
                     "floor at the centre")
        return {"kind": "function", "c": c, "floor": floor, "sigma": sigma, "keys": set(pieces),
                "terms": [([(m, v) for m, v in enumerate(s) if v], i) for s, i in pieces]}
    if kind != "lattice-hull" or cls["kind"] != "lattice":
        fail(f"{what}: a {kind!r} witness is not an instance of this class")
    n, box = cls["n"], list(zip(cls["lo"], cls["up"]))
    pts = get(w, "points", what)
    points = [vector(p, cls["dim"], what) for p in (pts if isinstance(pts, list) else [None])]
    for p in points:
        if any(not a <= v <= b for v, (a, b) in zip(p, box)) or \
                any(abs(v) > cls["R"] for v in p[n:]):
            fail(f"{what}: a generating point lies outside the box")
        if all(v.denominator == 1 for v in p[:n]):
            fail(f"{what}: a generating point is itself mixed-integer")
    fibre, fib = None, get(w, "fibre", what)
    if fib is not None:
        v = get(fib, "integer", what)
        v = [integer(z, what, -2 ** 63, 2 ** 63) for z in (v if isinstance(v, list) else [0.5])]
        c = vector(get(fib, "center", what), d, what, exact)
        if len(v) != n or any(not a <= z <= b for z, (a, b) in zip(v, box)):
            fail(f"{what}: the fibre's integer part is not a lattice point of the box")
        r = real(get(fib, "radius", what), what)
        if r != cls["rho"] or not ball_in_box(c, r, cls["R"]):
            fail(f"{what}: the fibre radius is not rho, or the fibre ball leaves the box")
        fibre = ([F(z) for z in v], c)
    parts = [p[:n] for p in points] + ([fibre[0]] if fibre else [])
    for col in zip(*parts):
        if max(col) > math.floor(min(col)) + 1:
            fail(f"{what}: the integer parts do not lie in one unit cube, so the hull's "
                 "mixed-integer points are not shown to be its fibre ball")
    return {"kind": "hull", "points": points, "fibre": fibre, "n": n, "r": cls["rho"]}

def in_fibre(w, x):
    f, n = w.get("fibre"), w.get("n")
    return f is not None and x[:n] == f[0] and in_ball(x[n:], f[1], w["r"])

def agrees(w, x, ans):
    """Does witness w agree with the answer ans to the query x?"""
    if w["kind"] == "function":
        v, g = ans
        return (tuple(g), v - dot(g, x)) in w["keys"] and fvalue(w, x) <= v
    if ans == "inside":
        if w["kind"] == "ball":
            return in_ball(x, w["c"], w["r"])
        return w["kind"] == "hull" and (x in w["points"] or in_fibre(w, x))
    a, b = ans
    if w["kind"] != "hull":
        return w["kind"] == "empty" or ball_strictly_below(a, b, w["c"], w["r"])
    if any(dot(a, p) >= b for p in w["points"]):
        return False
    n, (v, c) = w["n"], w["fibre"] or (None, None)
    return v is None or ball_strictly_below(a[n:], b - dot(a[:n], v), c, w["r"])

def says_none(w):
    """True when the witness's only correct output is "empty" (no feasible point)."""
    return w["kind"] == "empty" or (w["kind"] == "hull" and w["fibre"] is None)

def disjoint(u, w, cls):
    if cls["kind"] == "first-order":
        return linf(u["c"], w["c"]) > cls["eps"] / u["sigma"] + cls["eps"] / w["sigma"]
    if says_none(u) or says_none(w):
        return says_none(u) != says_none(w)
    if u["kind"] == "ball":
        ca, cb = u["c"], w["c"]
    elif u["fibre"][0] != w["fibre"][0]:
        return True
    else:
        (_, ca), (_, cb) = u["fibre"], w["fibre"]
        if not ca:
            return False
    return sum((a - b) ** 2 for a, b in zip(ca, cb)) > 4 * u["r"] * u["r"]

def refutes(w, output, cls):
    """Is the method's output wrong for instance w?"""
    if output == "empty":
        return cls["kind"] != "first-order" and not says_none(w)
    if cls["kind"] == "first-order":
        return fvalue(w, output) > w["floor"] + cls["eps"]
    if cls["kind"] == "lattice":
        return any(v.denominator != 1 for v in output[:cls["n"]]) or not in_fibre(w, output)
    return w["kind"] == "empty" or not in_ball(output, w["c"], w["r"])

def parse_answer(a, cls, t):
    what, kind, d = f"answer {t}", get(a, "kind", f"answer {t}"), cls["dim"]
    if (kind == "first-order") != (cls["kind"] == "first-order"):
        fail(f"{what}: a {kind!r} answer in a {cls['kind']} transcript")
    if kind == "first-order":
        g = vector(get(a, "subgradient", what), d, what, exact)
        if not dual_norm_ok(g, cls):
            fail(f"{what}: the subgradient is longer than L in the dual norm")
        return (exact(get(a, "value", what), what), g)
    if kind == "inside":
        return "inside"
    if kind != "cut":
        fail(f"{what}: unknown answer {kind!r}")
    nrm = get(a, "normal", what)
    if isinstance(nrm, dict):
        axis, sign = integer(get(nrm, "axis", what), what), get(nrm, "sign", what)
        if axis >= d or not is_int(sign) or sign not in (1, -1):
            fail(f"{what}: bad axis normal")
        nrm = [sign if i == axis else 0 for i in range(d)]  # exact ints
    elif not any(nrm := vector(nrm, d, what)):
        fail(f"{what}: the cut normal is zero")
    return (nrm, exact(get(a, "offset", what), what))

def unique_keys(pairs):
    if len({k for k, _ in pairs}) != len(pairs):
        raise ValueError("a key appears twice in one object")
    return dict(pairs)

def check(text):
    lines = text.split("\n")
    if lines and lines[-1] == "":
        lines.pop()
    if not lines:
        fail("the file is empty")
    recs = []
    for AT[0], raw in enumerate(lines, 1):
        try:
            rec = json.loads(raw.rstrip("\r"), parse_float=finite_float, parse_constant=finite_float,
                             object_pairs_hook=unique_keys)
        except ValueError as e:
            fail(f"not a complete JSON record (truncated?) or a repeated key: {e}")
        if not isinstance(rec, dict) or rec.get("type") not in ("header", "query", "final") \
                or not isinstance(rec.get("data"), dict):
            fail('not a record {"type": header|query|final, "data": {...}}')
        recs.append(rec)
    kinds = [r["type"] for r in recs]
    if kinds[0] != "header":
        fail("record out of order: the first record must be the header", 1)
    if kinds[-1] != "final":
        fail("the transcript ends without a final record (truncated?)", len(kinds))
    for no, kind in enumerate(kinds[1:-1], 2):
        if kind != "query":
            fail(f"record out of order: a {kind} record among the queries", no)
    AT[0], head = 1, recs[0]["data"]
    version = get(head, "format", "header")
    if not is_int(version) or version != FORMAT:
        fail(f"transcript format {version!r} is not understood (this checker reads {FORMAT})")
    for key in ("tool", "adversary", "method"):
        if not isinstance(get(head, key, "header"), str):
            fail(f"header: {key} must be text")
    budget = integer(get(head, "budget", "header"), "budget")
    integer(get(head, "seed", "header"), "seed")
    cls = parse_class(get(head, "class", "header"))
    AT[0], fin = len(recs), recs[-1]["data"]
    used = integer(get(fin, "queries_used", "final"), "queries_used")
    if used != len(recs) - 2:
        fail(f"the final record says {used} queries were used, the file holds {len(recs) - 2}")
    ending = get(fin, "ending", "final")
    ekind, output = get(ending, "kind", "ending"), None
    if ekind == "output":
        out = get(ending, "output", "ending")
        output = "empty" if get(out, "kind", "output") == "empty" else None
        if out["kind"] == "point":
            output = vector(get(out, "point", "output"), cls["dim"], "output")
        elif output is None:
            fail(f"unknown output {out['kind']!r}")
    elif ekind == "budget-exhausted" and used != budget:
        fail(f"the budget ended the game after {used} queries, but the budget is {budget}")
    elif ekind == "method-failed" and not isinstance(get(ending, "reason", "ending"), str):
        fail("method-failed needs a reason")
    elif ekind not in ("budget-exhausted", "method-failed", "output"):
        fail(f"unknown ending {ekind!r}")
    cert = get(fin, "certificate", "final")
    schema, prefix, wits = None, 0, []
    if cert is not None:
        schema = cert.get("schema", 1) if isinstance(cert, dict) else None
        if not is_int(schema) or schema not in SCHEMAS:
            fail(f"certificate schema {schema!r} is not understood (this checker reads "
                 f"{', '.join(map(str, SCHEMAS))})")
        prefix = integer(get(cert, "prefix", "certificate"), "prefix")
        if prefix > used:
            fail(f"the certificate claims prefix {prefix}, more than the {used} queries")
        inst = get(cert, "instances", "certificate")
        if not isinstance(inst, list):
            fail("the certificate's instances must be a list")
        wits = [parse_witness(w, cls, k) for k, w in enumerate(inst, 1)]
    for t, rec in enumerate(recs[1:-1], 1):
        AT[0], q = t + 1, rec["data"]
        index = get(q, "index", "query")
        if not is_int(index) or index != t:
            fail(f"record out of order: expected query {t}, found {index!r}")
        x = vector(get(q, "point", f"query {t}"), cls["dim"], f"query {t}")
        ans = parse_answer(get(q, "answer", f"query {t}"), cls, t)
        if cls["kind"] != "first-order" and ans != "inside" and dot(ans[0], x) < ans[1]:
            fail(f"answer {t}: the query lies on the kept side of its own cut (a.x < b)")
        for k, w in enumerate(wits if t <= prefix else [], 1):
            if not agrees(w, x, ans):
                fail(f"answer {t}: witness #{k} ({w['kind']}) does not agree with it")
    AT[0] = len(recs)
    full = cert is not None and prefix == used
    refuted = output is not None and full and any(refutes(w, output, cls) for w in wits)
    pairs = [(u, w) for i, u in enumerate(wits) for w in wits[i + 1:]]
    apart = len(wits) >= 2 and all(disjoint(u, w, cls) for u, w in pairs)
    if cert is not None and not apart and not refuted:
        fail("the witnesses' correct outputs are not pairwise disjoint, and no witness refutes "
             "the method's output on the whole game")
    if ekind != "output":
        outcome = ekind
    elif cls["kind"] == "first-order" and output == "empty":
        outcome = "method-failed"
    elif output == "empty" and cls.get("promise") == "nonempty":
        outcome = "empty-breaks-promise"
    elif refuted:
        outcome = "empty-refuted" if output == "empty" else "output-refuted"
    else:
        outcome = "output-stands"
    eps_cert = "none"
    if cls["kind"] == "first-order" and len(wits) >= 2:
        best = min(linf(u["c"], w["c"]) / (1 / u["sigma"] + 1 / w["sigma"]) for u, w in pairs)
        down = float(best)
        eps_cert = repr(math.nextafter(down, -math.inf) if F(down) > best else down)
    return (f"class={cls['kind']} format={FORMAT} schema={schema or '-'} queries_used={used} "
            f"censored={'yes' if ekind == 'budget-exhausted' else 'no'} "
            f"certified_lower_bound={'none' if cert is None else prefix + 1} outcome={outcome} "
            f"certified_uncertainty={eps_cert}")

def check_file(path):
    """Checks one file, prints its verdict line, returns its exit code."""
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
            fail("not valid UTF-8", data[:e.start].count(b"\n") + 1)
        print(f"VALID {path}: {check(text)}")
        return 0
    except Reject as r:
        print(f"REJECTED {path}: line {r.args[0]}: {r.args[1]}")
        return 1

def main(argv):
    if len(argv) < 2 or any(a.startswith("-") for a in argv[1:]):
        print("usage: check_certificate.py TRANSCRIPT.jsonl [MORE.jsonl ...]", file=sys.stderr)
        return 2
    return max([check_file(path) for path in argv[1:]])

if __name__ == "__main__":
    sys.exit(main(sys.argv))
