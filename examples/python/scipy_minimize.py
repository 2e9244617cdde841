"""scipy.optimize.minimize as an external naysayer method (first-order classes).

Run by naysayer, it serves one game: scipy minimizes the adversary's function over the
box, each call of its objective (value) or gradient (subgradient) asking one query
through `naysayer_client.solver_method` (repeated points are answered from a cache), and
it outputs scipy's `x`. Points are clipped into the box before they are asked (SLSQP may
step a rounding error outside its bounds). What scipy itself concluded goes to stderr:

    naysayer play --class first-order -d 2 --eps 0.05 --budget 1000 \\
        --exec -- python3 examples/python/scipy_minimize.py serve SLSQP

Run directly, it plays Nelder-Mead and SLSQP that way with `naysayer_client.play` (the
binary from NAYSAYER_BIN or PATH) and prints what naysayer certified beside what scipy
claimed:

    python3 examples/python/scipy_minimize.py [--dim D] [--eps E] [--budget B]

scipy is not a dependency of naysayer or of its Python package: without it this script
says so on stderr and exits with status 77 (the conventional "skipped" status; common
practice, no source).
"""

import argparse
import os
import sys

# This checkout's client (python/src), or the installed package: see naysayer_method.py.
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import naysayer_method  # noqa: E402,F401
from naysayer_client import NaysayerError, main, play, serve, solver_method  # noqa: E402

EXIT_NO_SCIPY = 77
GRADIENT_METHODS = {"SLSQP", "L-BFGS-B", "BFGS", "CG", "TNC", "trust-constr"}
NO_SCIPY = "scipy is not installed (pip install scipy); this example needs it"


def have_scipy():
    try:
        import scipy.optimize  # noqa: F401
    except ImportError:
        return False
    return True


def minimizer(name):
    """solve(game, oracle) for serve: scipy.optimize.minimize with method `name`."""
    from scipy.optimize import minimize

    def solve(game, oracle):
        if game.oracle != "first-order" or game.lower is None:
            raise ValueError("this example plays the first-order classes with a box")
        bounds = list(zip(game.lower, game.upper))

        def clip(x):
            return [min(max(float(v), lo), hi) for v, (lo, hi) in zip(x, bounds)]

        def fun(x):
            return oracle(clip(x)).value

        def jac(x):
            return oracle(clip(x)).subgradient

        start = [0.5 * lo + 0.5 * hi for lo, hi in bounds]
        options = {"jac": jac} if name in GRADIENT_METHODS else {}
        result = minimize(fun, start, method=name, bounds=bounds, **options)
        print("scipy %s: success=%s, nfev=%s, message=%s"
              % (name, result.success, result.nfev, result.message), file=sys.stderr)
        return clip(result.x)

    return solve


def serve_one(name):
    if not have_scipy():
        # Refuse the game with the reason, so that naysayer shows it.
        def refuse(game):
            raise RuntimeError(NO_SCIPY)

        serve(refuse)
        sys.exit(EXIT_NO_SCIPY)
    main(solver_method(minimizer(name)))


def play_both(args):
    if not have_scipy():
        print(NO_SCIPY, file=sys.stderr)
        sys.exit(EXIT_NO_SCIPY)
    me = os.path.abspath(__file__)
    print("first-order class, d = %d, eps = %g, budget %d, adversary slab-funnel"
          % (args.dim, args.eps, args.budget))
    for name in ("Nelder-Mead", "SLSQP"):
        try:
            result = play([sys.executable, me, "serve", name], class_="first-order",
                          dim=args.dim, eps=args.eps, budget=args.budget, transcript=False)
        except NaysayerError as error:
            print("naysayer: %s" % error, file=sys.stderr)
            sys.exit(2)
        claim = [line for line in result.stderr.splitlines() if line.startswith("scipy ")]
        print("%-12s queries used %s%s, certified lower bound %s, outcome %s, verified %s"
              % (name, result.queries_used, " (censored)" if result.censored else "",
                 result.certified_lower_bound, result.outcome, result.verified))
        if result.method_failure:
            print("             method failed: %s" % result.method_failure)
        for line in claim:
            print("             %s" % line)


if __name__ == "__main__":
    if sys.argv[1:2] == ["serve"]:
        serve_one(sys.argv[2] if len(sys.argv) > 2 else "Nelder-Mead")
    else:
        parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
        parser.add_argument("--dim", type=int, default=2)
        parser.add_argument("--eps", type=float, default=0.05)
        parser.add_argument("--budget", type=int, default=1000)
        play_both(parser.parse_args())
