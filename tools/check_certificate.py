#!/usr/bin/env python3
"""An independent re-check of naysayer lower-bound certificates (Python 3 stdlib only).

Usage: python3 tools/check_certificate.py TRANSCRIPT.jsonl [MORE.jsonl ...]

Reads exactly transcript format 1 (header "format") and certificate schema 1 (final
record "certificate.schema"; absent = 1, from before the key existed); refuses others.
Written from the documented format (README, rustdoc of naysayer::transcript) and docs/theory.md
§0, §1, §2, §4, §7, sharing no code with the Rust verifier. Every comparison is exact
(Fraction over the stored numbers; square roots by squaring with the sign checked; no
tolerance).

Numbers, one reading: a plain JSON number is exactly the float it parses to (an integer
token too: 9007199254740993 is the float 9007199254740992); an exact number is
{"exact": "p/q", "approx": f} with "exact" matching -?D(/D)? (D: 1 to 4096 ASCII digits,
nonzero denominator, nothing else), |p/q| < 2^1024 - 2^970, and f the float nearest to
p/q. Integer fields (format, schema, seed, budget, dim, cont_dim, index, queries_used,
prefix, axis, sign, lower, upper, fibre integer) must be integer tokens (no fraction,
no exponent; -0 is the float -0.0, not an integer) within their documented ranges.

Limits (the same as the Rust verifier's; beyond them a file is refused, with a reason):
a line holds at most 64 MiB (refused as soon as the limit is passed, without reading the
rest); arrays and objects nest at most 32 deep; a plain number is at most 100 characters;
no object repeats a key; a certificate holds at most 16 witnesses; and the certified
prefix T* times the dense work per answer (the nonzero slope entries of function pieces
with two or more of them, plus generating points times the query dimension of lattice
hulls, summed over witnesses) is at most 5 * 10^7.

Claims: records in order; valid class; T* <= queries used; counts match; every answer of
the certified prefix T* agrees with every witness. The certified lower bound T* + 1 holds
only when there are at least two witnesses and their correct outputs are pairwise
disjoint (no output is correct for all of them). Otherwise the certificate is valid only
if T* covers the game and a witness refutes the method's output: that is reported as the
outcome (output-refuted, empty-refuted) with no certified lower bound, because one wrong
output does not show that no method could have stopped. Per class:
- separation: cuts {a.y < b} exclude their query (a.x >= b); a witness is the empty set
  or a closed rho-ball in the box, inside a cut iff s = b - a.c > 0 and rho^2|a|^2 < s^2.
- first-order: subgradients within L (dual norm); a witness max(pieces, floor + sigma
  |y - c|_inf) has c in the box, 0 < sigma <= L, pieces within L and <= floor at c (so
  convex, L-Lipschitz, minimal at c, {f <= floor + eps} in c + (eps/sigma) B_inf); it
  reproduces each answer (own affine piece is a piece, f(x_t) = v_t; hence pairwise
  consistency v_s + g_s.(x_t - x_s) <= v_t); centres apart: |c_A - c_B|_inf > eps/sigma_A
  + eps/sigma_B. Prints eps_cert = min |c_A - c_B|_inf / (1/sigma_A + 1/sigma_B), rounded
  down to a float. The largest piece at a point is found on the upper envelope of each
  coordinate's one-entry pieces (lines a y_i + b, by increasing slope, a line dropped
  when it is nowhere strictly above its neighbours), by bisection over the crossings.
- lattice: a witness conv(F cup {v} x B(c, rho)) lies in the box, F has no mixed-integer
  point, the integer parts of F and v lie in one unit cube (a lattice point of the hull is
  then a cube vertex, a combination of points with that integer part only: the hull's
  mixed-integer points are exactly the fibre ball); a cut holds it iff it holds F
  strictly and the fibre ball (only the continuous part of the normal in the norm).

One verdict line per file. Exit 0: every claim holds; 1: rejected (a claim fails, the
file is malformed or over a limit, or its version is unknown); 2: bad usage or unreadable
file (several files: the largest code).
"""
import bisect
import json
import math
import re
import sys
from fractions import Fraction as F

FORMAT, SCHEMAS = 1, (1,)
MAX_LINE_BYTES = 64 * 2 ** 20
MAX_DEPTH = 32
MAX_NUMBER_CHARS = 100
MAX_EXACT_DIGITS = 4096
MAX_WITNESSES = 16
MAX_CHECK_WORK = 50_000_000
TOO_BIG = 2 ** 1024 - 2 ** 970  # the smallest magnitude whose nearest float is infinite
EXACT_TEXT = re.compile(r"-?([0-9]+)(?:/([0-9]+))?")
SURROGATE = re.compile("[\ud800-\udfff]")
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
    """A plain number: the exact value of the float it parses to."""
    if is_int(v):
        return F(float(v))  # correctly rounded, ties to even
    if isinstance(v, float) and math.isfinite(v):
        return F(v)
    fail(f"{what}: expected a finite number, found {v!r}")

def exact(v, what):
    """A number the adversary computed: a plain number, or {"exact": "p/q", "approx": f}."""
    if not isinstance(v, dict):
        return real(v, what)
    if set(v) != {"exact", "approx"} or not isinstance(v["exact"], str):
        fail(f"{what}: an exact number needs exactly 'exact' (text) and 'approx'")
    m = EXACT_TEXT.fullmatch(v["exact"])
    if m is None:
        fail(f"{what}: {v['exact'][:40]!r} is not -digits/digits (ASCII, no spaces, signs "
             "other than a leading '-', exponents or decimal points)")
    if any(g is not None and len(g) > MAX_EXACT_DIGITS for g in m.groups()):
        fail(f"{what}: an exact number has more than {MAX_EXACT_DIGITS} digits above or "
             "below its fraction bar")
    p, q = m.groups()
    if q is not None and int(q) == 0:
        fail(f"{what}: the denominator of {v['exact'][:40]!r} is zero")
    numerator = -int(p) if v["exact"].startswith("-") else int(p)
    value = F(numerator, int(q) if q is not None else 1)
    if abs(value) >= TOO_BIG:
        fail(f"{what}: an exact number must be smaller than 2^1024 - 2^970 in magnitude")
    if real(v["approx"], what) != F(float(value)):  # float(Fraction) rounds correctly
        fail(f"{what}: approx {v['approx']!r} is not the nearest float to {v['exact'][:40]}")
    return value

def vector(v, n, what, read=real):
    if not isinstance(v, list) or len(v) != n:
        fail(f"{what}: expected a list of {n} numbers")
    return [read(x, what) for x in v]

# ---- reading lines within the limits -------------------------------------------------

def number_token(text, convert):
    if len(text) > MAX_NUMBER_CHARS:
        raise ValueError(f"a number is written with {len(text)} characters, more than the "
                         f"limit of {MAX_NUMBER_CHARS}")
    return convert(text)

def float_token(text):
    x = float(text)
    if not math.isfinite(x):
        raise ValueError(f"{text[:40]} is not a finite number")
    return x

def int_token(text):
    return -0.0 if text == "-0" else int(text)  # "-0" is the float -0.0

def refuse_constant(text):  # NaN and Infinity, which JSON does not allow
    raise ValueError(f"{text} is not a JSON number")

def unique_keys(pairs):
    if len({k for k, _ in pairs}) != len(pairs):
        seen = set()
        for k, _ in pairs:
            if k in seen:
                raise ValueError(f"an object repeats the key {k!r}")
            seen.add(k)
    return dict(pairs)

def check_shape(value):
    """Nesting at most MAX_DEPTH deep; no string (or key) with a lone surrogate escape."""
    stack = [(value, 1)]
    while stack:
        v, depth = stack.pop()
        if isinstance(v, (dict, list)):
            if depth > MAX_DEPTH:
                fail(f"arrays and objects nest deeper than {MAX_DEPTH} levels")
            items = v.values() if isinstance(v, dict) else v
            if isinstance(v, dict):
                stack.extend((k, depth) for k in v)
            stack.extend((x, depth + 1) for x in items)
        elif isinstance(v, str) and SURROGATE.search(v):
            fail("a string holds an unpaired surrogate escape (not valid Unicode)")

def parse(raw):
    """One line (bytes, line break removed) as JSON, within the limits."""
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        fail("not valid UTF-8")
    try:
        value = json.loads(text, parse_float=lambda t: number_token(t, float_token),
                           parse_int=lambda t: number_token(t, int_token),
                           parse_constant=refuse_constant, object_pairs_hook=unique_keys)
    except RecursionError:
        fail(f"arrays and objects nest deeper than {MAX_DEPTH} levels")
    except ValueError as e:
        fail(f"not a complete JSON record (truncated?), or over a limit: {e}")
    check_shape(value)
    return value

def lines(f):
    """The lines of a binary file, line break (and a \\r before it) removed; a line
    longer than MAX_LINE_BYTES is refused once its first MAX_LINE_BYTES + 2 bytes are
    read."""
    number = 0
    while True:
        chunk = f.readline(MAX_LINE_BYTES + 2)
        if not chunk:
            return
        number += 1
        ended = chunk.endswith(b"\n")
        body = chunk[:-1] if ended else chunk
        if body.endswith(b"\r"):
            body = body[:-1]
        if len(body) > MAX_LINE_BYTES or (not ended and len(chunk) == MAX_LINE_BYTES + 2):
            fail(f"the line is longer than {MAX_LINE_BYTES} bytes (the limit of a transcript "
                 "line); refused without reading the rest of it", number)
        yield number, body

def record(raw, no):
    AT[0] = no
    rec = parse(raw)
    if not isinstance(rec, dict) or rec.get("type") not in ("header", "query", "final") \
            or not isinstance(rec.get("data"), dict):
        fail('not a record {"type": header|query|final, "data": {...}}')
    return rec

# ---- the class and the witnesses -----------------------------------------------------

def parse_class(c):
    kind = get(c, "kind", "class")
    if kind == "large-scale":
        fail("class: a large-scale transcript is a demonstration, not a certificate "
             "(docs/theory.md §3): its numbers are checked to a stated tolerance, never "
             "exactly, so this checker refuses it")
    if kind not in ("feasibility", "first-order", "lattice"):
        fail(f"class: unknown kind {kind!r}")

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
    rho = positive("rho", sys.float_info.max, normal=True)
    cls.update(lo=lo, up=up, n=len(lo), d=d, dim=len(lo) + d, rho=rho)
    if any(a > b for a, b in zip(lo, up)) or (d > 0 and cls["rho"] >= cls["R"]):
        fail("class: a lower bound exceeds its upper bound, or rho is not below R")
    return cls

def dot(a, x):
    """a.x for a sparse a, a list of (index, value) with nonzero values."""
    return sum((ai * x[i] for i, ai in a), F(0))

def sparse(v):
    return [(i, x) for i, x in enumerate(v) if x]

def dual_norm_ok(g, cls):
    """||g||_* <= L: max |g_i| (Lipschitz in l1), |g|_2 (in l2), sum |g_i| (in l_inf)."""
    a, L = [abs(v) for _, v in g], cls["L"]
    if cls["norm"] == "l2":
        return sum(v * v for v in a) <= L * L
    return (max(a, default=0) if cls["norm"] == "l1" else sum(a)) <= L

def ball_in_box(c, r, R):
    return all(-R <= ci - r and ci + r <= R for ci in c)

def in_ball(x, c, r):
    return sum((xi - ci) ** 2 for xi, ci in zip(x, c)) <= r * r

def ball_strictly_below(a, b, c, r, shift=0):
    """B(c, r) inside the open half-space {a.y < b} (a sparse, its indices shifted by
    `shift` into c): s = b - a.c > 0 and r^2 |a|^2 < s^2."""
    s = b - sum((ai * c[i - shift] for i, ai in a), F(0))
    return s > 0 and r * r * sum(ai * ai for _, ai in a) < s * s

def linf(x, c):
    return max(abs(a - b) for a, b in zip(x, c))

def envelope(lines_):
    """The upper envelope of lines y -> a y + b: (lines by increasing slope, crossings)."""
    best = {}
    for a, b in lines_:
        best[a] = max(b, best.get(a, b))
    hull = []
    for a, b in sorted(best.items()):
        # With slopes a1 < a2 < a, the middle line is never strictly on top iff its
        # crossing with the first is not left of its crossing with the new one.
        while len(hull) >= 2:
            (a1, b1), (a2, b2) = hull[-2], hull[-1]
            if (b1 - b2) * (a - a2) < (b2 - b) * (a2 - a1):
                break
            hull.pop()
        hull.append((a, b))
    cross = [(b1 - b2) / (a2 - a1) for (a1, b1), (a2, b2) in zip(hull, hull[1:])]
    return hull, cross

def fvalue(w, x):
    """The exact value of a function witness at x: the cone, the largest constant piece,
    each coordinate's envelope at x_i, and every dense piece."""
    top = [w["floor"] + w["sigma"] * linf(x, w["c"])] + w["const"]
    for i, (hull, cross) in w["env"].items():
        a, b = hull[bisect.bisect_left(cross, x[i])]
        top.append(a * x[i] + b)
    top.extend(dot(s, x) + b for s, b in w["dense"])
    return max(top)

def parse_witness(w, cls, k):
    what, kind, d = f"witness #{k}", get(w, "kind", f"witness #{k}"), cls["d"]
    if kind == "empty" and cls["kind"] != "first-order":
        if cls.get("promise") == "nonempty":
            fail(f"{what}: the class promises a nonempty K")
        return {"kind": "empty", "work": 0}
    if kind == "ball" and cls["kind"] == "feasibility":
        c = vector(get(w, "center", what), d, what, exact)
        r = real(get(w, "radius", what), what)
        if r != cls["rho"] or not ball_in_box(c, r, cls["R"]):
            fail(f"{what}: the radius is not rho, or the ball leaves the box")
        return {"kind": "ball", "c": c, "r": r, "work": 0}
    if kind == "function" and cls["kind"] == "first-order":
        c = vector(get(w, "center", what), d, what, exact)
        floor, sigma = exact(get(w, "floor", what), what), exact(get(w, "slope", what), what)
        if any(abs(ci) > cls["R"] for ci in c) or not 0 < sigma <= cls["L"]:
            fail(f"{what}: the centre lies outside the box, or the cone slope is not in (0, L]")
        raw = get(w, "pieces", what)
        if not isinstance(raw, list):
            fail(f"{what}: pieces must be a list")
        pieces = [(tuple(sparse(vector(get(p, "slope", what), d, what, exact))),
                   exact(get(p, "intercept", what), what)) for p in raw]
        const, lines_, dense = [], {}, []
        for j, (s, i) in enumerate(pieces, 1):
            if not dual_norm_ok(s, cls) or dot(s, c) + i > floor:
                fail(f"{what}: piece {j} is steeper than L in the dual norm or exceeds the "
                     "floor at the centre")
            if not s:
                const.append(i)
            elif len(s) == 1:
                lines_.setdefault(s[0][0], []).append((s[0][1], i))
            else:
                dense.append((s, i))
        return {"kind": "function", "c": c, "floor": floor, "sigma": sigma, "keys": set(pieces),
                "const": [max(const)] if const else [], "dense": dense,
                "env": {m: envelope(v) for m, v in lines_.items()},
                "work": sum(len(s) for s, _ in dense)}
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
        v = [integer(z, what, -2 ** 63, 2 ** 63 - 1) for z in (v if isinstance(v, list) else [0.5])]
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
    return {"kind": "hull", "points": points, "fibre": fibre, "n": n, "r": cls["rho"],
            "work": len(points) * cls["dim"]}

def in_fibre(w, x):
    f, n = w.get("fibre"), w.get("n")
    return f is not None and x[:n] == f[0] and in_ball(x[n:], f[1], w["r"])

def agrees(w, x, ans):
    """Does witness w agree with the answer ans to the query x?"""
    if w["kind"] == "function":
        v, g = ans
        return (g, v - dot(g, x)) in w["keys"] and fvalue(w, x) <= v
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
    if v is None:
        return True
    integer_part = [(i, ai) for i, ai in a if i < n]
    return ball_strictly_below([(i, ai) for i, ai in a if i >= n], b - dot(integer_part, v),
                               c, w["r"], shift=n)

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
        g = tuple(sparse(vector(get(a, "subgradient", what), d, what, exact)))
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
        nrm = [(axis, F(sign))]
    elif not (nrm := sparse(vector(nrm, d, what))):
        fail(f"{what}: the cut normal is zero")
    return (nrm, exact(get(a, "offset", what), what))

# ---- the whole file --------------------------------------------------------------------

def check(path):
    """Checks one file: two streaming passes, the first for the final record."""
    last, count = None, 0
    with open(path, "rb") as f:
        for count, raw in lines(f):
            last = raw
    if last is None:
        fail("the file is empty", 1)
    with open(path, "rb") as f:
        stream = lines(f)
        return check_records(stream, last, count)

def check_records(stream, last_raw, count):
    no, raw = next(stream)
    head = record(raw, 1)
    if head["type"] != "header":
        fail("record out of order: the first record must be the header", 1)
    head = head["data"]
    version = get(head, "format", "header")
    if not is_int(version) or version != FORMAT:
        fail(f"transcript format {version!r} is not understood (this checker reads {FORMAT})")
    for key in ("tool", "adversary", "method"):
        if not isinstance(get(head, key, "header"), str):
            fail(f"header: {key} must be text")
    budget = integer(get(head, "budget", "header"), "budget")
    integer(get(head, "seed", "header"), "seed")
    cls = parse_class(get(head, "class", "header"))
    fin = record(last_raw, count)
    if count < 2 or fin["type"] != "final":
        fail("the transcript ends without a final record (truncated?)", count)
    fin = fin["data"]
    used = integer(get(fin, "queries_used", "final"), "queries_used")
    ending = get(fin, "ending", "final")
    ekind, output = get(ending, "kind", "ending"), None
    if ekind == "output":
        out = get(ending, "output", "ending")
        okind = get(out, "kind", "output")
        if okind == "point":
            output = vector(get(out, "point", "output"), cls["dim"], "output")
        elif okind == "empty":
            output = "empty"
        else:
            fail(f"unknown output {okind!r}")
    elif ekind == "budget-exhausted" and used != budget:
        fail(f"the budget ended the game after {used} queries, but the budget is {budget}")
    elif ekind == "method-failed" and not isinstance(get(ending, "reason", "ending"), str):
        fail("method-failed needs a reason")
    elif ekind == "interrupted" and not isinstance(get(ending, "signal", "ending"), str):
        fail("interrupted needs the signal's name")
    elif ekind not in ("budget-exhausted", "method-failed", "interrupted", "output"):
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
        if len(inst) > MAX_WITNESSES:
            fail(f"the certificate holds {len(inst)} witnesses, more than the limit of "
                 f"{MAX_WITNESSES}")
        wits = [parse_witness(w, cls, k) for k, w in enumerate(inst, 1)]
        work = prefix * sum(w["work"] for w in wits)
        if work > MAX_CHECK_WORK:
            fail(f"checking the certificate needs {work} evaluations, more than the limit of "
                 f"{MAX_CHECK_WORK}")
    if used != count - 2:
        fail(f"the final record says {used} queries were used, the file holds {count - 2} "
             "query lines")
    for no, raw in stream:
        if no == count:
            break
        t = no - 1
        rec = record(raw, no)
        if rec["type"] != "query":
            fail(f"record out of order: a {rec['type']} record among the queries")
        q = rec["data"]
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
    AT[0] = count
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
            f"certified_lower_bound={prefix + 1 if apart else 'none'} outcome={outcome} "
            f"certified_uncertainty={eps_cert}")

def check_file(path):
    """Checks one file, prints its verdict line, returns its exit code."""
    AT[0] = 1
    try:
        print(f"VALID {path}: {check(path)}")
        return 0
    except Reject as r:
        print(f"REJECTED {path}: line {r.args[0]}: {r.args[1]}")
        return 1
    except OSError as e:
        print(f"UNREADABLE {path}: {e}")
        return 2
    except (RecursionError, MemoryError) as e:  # a last resort: still one verdict line
        print(f"REJECTED {path}: line {AT[0]}: the input exceeds what this checker can hold "
              f"({type(e).__name__})")
        return 1

def main(argv):
    if len(argv) < 2 or any(a.startswith("-") for a in argv[1:]):
        print("usage: check_certificate.py TRANSCRIPT.jsonl [MORE.jsonl ...]", file=sys.stderr)
        return 2
    return max([check_file(path) for path in argv[1:]])

if __name__ == "__main__":
    sys.exit(main(sys.argv))
