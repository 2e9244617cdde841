"""Runs one game with the ``naysayer`` binary and reads its result into a Python object.

    from naysayer_client import play
    result = play("my_method.py", class_="first-order", dim=2, eps=0.2)
    print(result.queries_used, result.certified_lower_bound, result.outcome)

:func:`play` runs ``naysayer play --json --transcript PATH ... --exec -- PROGRAM`` and
returns a :class:`GameResult` built from the one JSON object that ``--json`` prints.
"""

import json
import os
import shutil
import signal
import subprocess
import sys
import tempfile
from dataclasses import dataclass, field
from typing import Optional

__all__ = [
    "GameResult",
    "NaysayerError",
    "NaysayerNotFound",
    "NaysayerFailed",
    "NaysayerTimeout",
    "find_binary",
    "play",
]

ENV_BINARY = "NAYSAYER_BIN"
"""The environment variable naming the naysayer binary."""


class NaysayerError(Exception):
    """naysayer could not be run, or ended without a game result.

    ``command`` is the argv that was run (or would have been), ``exit_code`` its exit
    code and ``stderr`` what it wrote on standard error (``None`` when it did not run).
    """

    def __init__(self, message, command=None, exit_code=None, stderr=None):
        super().__init__(message)
        self.command = command
        self.exit_code = exit_code
        self.stderr = stderr


class NaysayerNotFound(NaysayerError):
    """The naysayer binary was not found (argument, NAYSAYER_BIN, PATH)."""


class NaysayerFailed(NaysayerError):
    """naysayer ended without a game result: bad arguments (exit code 2), an I/O error
    (4), or anything else that printed no result; its standard error is in the message."""


class NaysayerTimeout(NaysayerError):
    """The game took longer than the ``timeout`` given to :func:`play`. ``result`` is the
    :class:`GameResult` of the interrupted game when naysayer printed one (ending
    ``interrupted``, exit code 6: the transcript certifies what was answered), else
    ``None``."""

    def __init__(self, message, command=None, exit_code=None, stderr=None, result=None):
        super().__init__(message, command, exit_code, stderr)
        self.result = result


@dataclass(frozen=True)
class GameResult:
    """One game as ``naysayer play --json`` reported it.

    ``queries_used`` counts the queries the method asked (censored when ``censored``:
    the budget ended the game). ``certified_lower_bound`` is T* + 1, where T* is the
    longest prefix of answers whose witnesses the exact verifier confirmed, only from
    witnesses with pairwise disjoint solution sets (``None`` otherwise, and always for
    the large-scale demonstrations, which certify nothing). ``outcome`` is how the game
    ended, judged by the witnesses (``output-stands``, ``output-refuted``, ``empty-refuted``,
    ``empty-breaks-promise``, ``budget-exhausted``, ``method-failed``, ...; for
    demonstrations the ending: ``output``, ``budget-exhausted``, ...). ``verified`` is
    true when the verifier accepted the certificate (or the judge the demonstration).
    ``transcript`` is the absolute path of the transcript (``None`` without one).
    ``exit_code`` is naysayer's (0 fine, 1 rejected, 3 the method failed, 6 interrupted,
    7 refuted under ``--fail-on-refuted``; see naysayer's README). The other fields are those of the JSON object; ``raw`` holds it.
    """

    queries_used: int
    censored: bool
    certified_lower_bound: Optional[int]
    outcome: Optional[str]
    verified: bool
    transcript: Optional[str]
    kind: str
    family: str
    game_class: dict
    method: str
    adversary: str
    seed: int
    budget: int
    method_failure: Optional[str]
    rejection: Optional[str]
    refuting_witness: Optional[int]
    certified_uncertainty: Optional[float]
    gap: Optional[float]
    lower_bound: Optional[float]
    upper_bound: Optional[float]
    claimed: Optional[bool]
    holds: Optional[bool]
    exit_code: int
    command: tuple = field(repr=False)
    stderr: str = field(repr=False)
    raw: dict = field(repr=False, compare=False)

    @classmethod
    def from_json(cls, raw, exit_code=0, command=(), stderr="", transcript=None):
        """Builds a result from the object ``play --json`` printed (``transcript``, when
        given, replaces the path as naysayer printed it)."""
        if transcript is None and raw.get("transcript") is not None:
            transcript = str(raw["transcript"])
        return cls(
            queries_used=raw["queries_used"],
            censored=raw["censored"],
            certified_lower_bound=raw["certified_lower_bound"],
            outcome=raw["outcome"],
            verified=raw["verified"],
            transcript=transcript,
            kind=raw["kind"],
            family=raw["family"],
            game_class=raw["class"],
            method=raw["method"],
            adversary=raw["adversary"],
            seed=raw["seed"],
            budget=raw["budget"],
            method_failure=raw["method_failure"],
            rejection=raw["rejection"],
            refuting_witness=raw["refuting_witness"],
            certified_uncertainty=raw["certified_uncertainty"],
            gap=raw["gap"],
            lower_bound=raw["lower_bound"],
            upper_bound=raw["upper_bound"],
            claimed=raw["claimed"],
            holds=raw["holds"],
            exit_code=exit_code,
            command=tuple(command),
            stderr=stderr,
            raw=raw,
        )


_INSTALL_HINT = ("pass binary=PATH, set %s, or put naysayer on PATH (for example "
                 "`cargo install --path .` in naysayer's repository)" % ENV_BINARY)


def find_binary(binary=None):
    """The path of the naysayer binary: ``binary`` if given, else the environment variable
    NAYSAYER_BIN, else ``naysayer`` on PATH. Raises :class:`NaysayerNotFound`, saying
    where it looked, when there is none."""
    if binary is not None:
        candidate, source = os.fspath(binary), "binary=%r" % (os.fspath(binary),)
    elif os.environ.get(ENV_BINARY):
        candidate = os.environ[ENV_BINARY]
        source = "%s=%r" % (ENV_BINARY, candidate)
    else:
        found = shutil.which("naysayer")
        if found is None:
            raise NaysayerNotFound("cannot find the naysayer binary: no `naysayer` on PATH "
                                   "and %s is not set; %s" % (ENV_BINARY, _INSTALL_HINT))
        return found
    if os.sep in candidate or (os.altsep and os.altsep in candidate):
        if os.path.isfile(candidate) and os.access(candidate, os.X_OK):
            return candidate
        what = "does not exist" if not os.path.exists(candidate) else "is not an executable file"
        raise NaysayerNotFound("cannot use the naysayer binary from %s: it %s; %s"
                               % (source, what, _INSTALL_HINT))
    found = shutil.which(candidate)
    if found is None:
        raise NaysayerNotFound("cannot use the naysayer binary from %s: no such program "
                               "on PATH; %s" % (source, _INSTALL_HINT))
    return found


def _program(method):
    """The argv of the method's program: a ``.py`` file runs with this Python."""
    if isinstance(method, (str, os.PathLike)):
        path = os.fspath(method)
        if path.endswith(".py"):
            return [sys.executable, os.path.abspath(path)]
        return [path]
    argv = [os.fspath(a) for a in method]
    if not argv:
        raise ValueError("the method's command is empty")
    return argv


def _options(class_options):
    """Keyword arguments as naysayer options: ``half_width=3`` is ``--half-width 3``,
    ``nonempty=True`` is ``--nonempty``; ``None`` and ``False`` are left out."""
    args = []
    for key, value in class_options.items():
        flag = "--" + key.replace("_", "-")
        if value is None or value is False:
            continue
        if value is True:
            args.append(flag)
        elif isinstance(value, float):
            args += [flag, repr(value)]
        else:
            args += [flag, str(value)]
    return args


def play(method, *, class_=None, dim=None, adversary=None, budget=None, seed=None,
         transcript=None, binary=None, timeout=None, cwd=None, env=None, options=(),
         **class_options):
    """Plays one game of ``method`` (an external program) and returns a :class:`GameResult`.

    ``method``: a path to a Python file (run with this interpreter, ``sys.executable``),
    or the program's argv as a list (``["python3", "m.py", "--flag"]``). ``class_``:
    naysayer's ``--class`` (``"feasibility"``, the default, ``"first-order"``,
    ``"lattice"``, ``"large-scale"``); ``dim``, ``adversary``, ``budget``, ``seed``: the
    ``play`` options of those names; every other keyword is a ``play`` option with
    underscores as dashes (``rho=1e-3``, ``eps=0.2``, ``half_width=3``,
    ``nonempty=True``, ``answer_timeout=5``); ``options``: more raw arguments.

    ``transcript``: where the transcript goes; ``None`` (the default) writes
    ``game.jsonl`` in a new temporary folder (kept: delete it when done), ``False``
    keeps it in memory only. ``binary``: the naysayer binary (see :func:`find_binary`).
    ``timeout``: seconds for the whole game; past them naysayer gets SIGTERM (it stops
    the program and closes the transcript; SIGKILL follows after 10 s) and
    :class:`NaysayerTimeout` is raised, with the interrupted game's result. ``cwd``, ``env``: for
    naysayer (and so for the program it starts).

    A game in which the method failed or the certificate was rejected is a result
    (``method_failure``, ``verified``, ``exit_code``), not an exception; a naysayer that
    cannot be found or ends without a result (bad arguments, I/O error) raises a
    :class:`NaysayerError` with its standard error.
    """
    exe = find_binary(binary)
    program = _program(method)
    argv = [exe, "play", "--json"]
    if class_ is not None:
        argv += ["--class", str(class_)]
    argv += _options({"dim": dim, "adversary": adversary, "budget": budget, "seed": seed})
    argv += _options(class_options)
    argv += [os.fspath(a) for a in options]
    path = None
    if transcript is None:
        path = os.path.join(tempfile.mkdtemp(prefix="naysayer-"), "game.jsonl")
    elif transcript is not False:
        path = os.path.abspath(os.fspath(transcript))
    if path is not None:
        argv += ["--transcript", path]
    argv += ["--exec", "--"] + program
    try:
        process = subprocess.Popen(argv, stdin=subprocess.DEVNULL, stdout=subprocess.PIPE,
                                   stderr=subprocess.PIPE, cwd=cwd, env=env)
    except FileNotFoundError as error:
        raise NaysayerNotFound("cannot start naysayer (%s): %s" % (exe, error),
                               command=argv) from None
    except OSError as error:
        raise NaysayerError("cannot start naysayer (%s): %s" % (exe, error),
                            command=argv) from None
    try:
        out, err = process.communicate(timeout=timeout)
    except subprocess.TimeoutExpired:
        # SIGTERM lets naysayer stop its method's process group and close the transcript.
        process.send_signal(signal.SIGTERM)
        try:
            out, err = process.communicate(timeout=10)
        except subprocess.TimeoutExpired:
            process.kill()
            out, err = process.communicate()
        stderr = err.decode("utf-8", "replace")
        raw = _result_object(out)
        try:
            result = None if raw is None else GameResult.from_json(
                raw, process.returncode, argv, stderr, path)
        except KeyError:
            result = None
        raise NaysayerTimeout("the game took more than %s s; naysayer was stopped%s"
                              % (timeout, _tail(stderr)), command=argv,
                              exit_code=process.returncode, stderr=stderr,
                              result=result) from None
    stderr = err.decode("utf-8", "replace")
    raw = _result_object(out)
    if raw is None:
        raise NaysayerFailed("naysayer exited with code %s without a game result%s"
                             % (process.returncode, _tail(stderr)), command=argv,
                             exit_code=process.returncode, stderr=stderr)
    try:
        return GameResult.from_json(raw, process.returncode, argv, stderr, path)
    except KeyError as error:
        raise NaysayerFailed("naysayer's result has no field %s (is the binary older than "
                             "this package?)" % error, command=argv,
                             exit_code=process.returncode, stderr=stderr) from None


def _result_object(out):
    """The JSON object of ``play --json`` (its last line), or None."""
    lines = [line for line in out.decode("utf-8", "replace").splitlines() if line.strip()]
    if not lines:
        return None
    try:
        raw = json.loads(lines[-1])
    except ValueError:
        return None
    if not isinstance(raw, dict) or "queries_used" not in raw:
        return None
    return raw


def _tail(stderr):
    text = stderr.strip()
    if not text:
        return " (nothing on standard error)"
    if len(text) > 4000:
        text = "...\n" + text[-4000:]
    return ":\n" + text
