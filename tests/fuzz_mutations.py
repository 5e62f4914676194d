"""Mutated copies of the demo case and study files, for the fuzzing test and validation/fuzz_inputs.py.

Plain Python, no heatstack import: the test suite (``tests/unit/test_fuzz_inputs.py``) and the
long-run script (``validation/fuzz_inputs.py``) both import this module, each handing it its own
``random.Random`` (hypothesis's in the suite, a seeded one in the script).

A mutant is made in two layers. The parsed TOML mapping is changed: keys dropped, renamed or
added, values replaced by the wrong type, extreme or non-finite numbers, hostile quantity strings
(``"9**9**9 s"``, ``"10**400 s"``, ``"70,5 t"``, ``"--1 degC"``, ``"nan degC"``, ``"1e308 W/K"``),
deep nesting and absurd sizes; it is written back as TOML by :func:`to_toml`. Then, sometimes, the
bytes are damaged: a null byte, bytes that are not UTF-8, another encoding, a cut. A quarter of
the mutants (when the number of changes is not given) only put a decimal comma, a doubled sign or
arithmetic into one quantity field of the file, which is otherwise valid; they carry ``must_fail``:
``heatstack check`` accepting one would be a silent misread.
"""

from __future__ import annotations

import copy
import json
import math
import random
import re
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"
CASE_FILE = EXAMPLES / "demo_rto.toml"
STUDY_FILE = EXAMPLES / "demo_study.toml"

#: Quantity strings no field may accept: a misread (decimal comma, doubled sign) or arithmetic.
MUST_FAIL_QUANTITIES = (
    "9**9**9 s",
    "10**400 s",
    "2*3 m",
    "70,5 t",
    "177,5 degC",
    "0,52 m",
    "1,000 kg",
    "--1 degC",
    "+-1 degC",
    "-+5 kt",
    "++3 K",
    "1e400 s",
    "(1+1) m",
    "1 m + 1 m",
    "__import__('os') s",
    "1 m; 2 m",
)
#: Hostile quantity strings some field may accept or refuse, but never with a traceback or hang.
HOSTILE_QUANTITIES = (
    "nan degC",
    "inf s",
    "-inf K",
    "1e308 W/K",
    "-1e308 m",
    "1e-308 m",
    "5e-324 s",
    "0 s",
    "-2 bar",
    "-300 degC",
    "0 K",
    "1e9 K",
    "1000 m/s",
    "100000 kt",
    "1e6 t",
    "1e-9 m",
    "1 parsec",
    "1 furlong/fortnight",
    "1 m**99",
    "1 m^-4",
    "1 ((((((((m))))))))",
    "1 m/s/s/s",
    "1",
    "",
    " ",
    "degC",
    "1 degC degC",
    "1 notaunit",
    "1 m\x00",
    "1\u00a0m",
    "\uff11 m",
    "1 °C",
    "1 m" + " " * 5000,
    "9" * 400 + " s",
    "0x10 s",
    "1_000 kg",
    "1e5",
    "True",
)
#: Values of the wrong type or absurd size for any key.
EXTREME_VALUES: tuple[Any, ...] = (
    0,
    -1,
    1,
    2**63 - 1,
    -(2**63),
    10**18,
    0.0,
    -0.0,
    1e308,
    -1e308,
    5e-324,
    math.nan,
    math.inf,
    -math.inf,
    True,
    False,
    "",
    "x" * 10_000,
    [],
    {},
    ["70 t"],
    {"value": "70 t"},
    [[1, 2], [3]],
    "\u0000",
    "\u202e\u0041",
)
#: Keys with a size meaning: a value far too large must be refused before memory is spent.
SIZE_KEYS = (
    ("assembly", "cell_size"),
    ("assembly", "min_cells"),
    ("assembly", "max_cells"),
    ("assembly", "design", "rotors"),
    ("solver", "target_change"),
    ("solver", "snapshot_times"),
)
SIZE_VALUES: tuple[Any, ...] = (
    10**12,
    10**6,
    2**64,
    -5,
    1e12,
    "1e-9 m",
    "1e-5 m",
    "0.1 mm",
    "1e-6 K",
    "1e-300 K",
    [f"{k} s" for k in range(0, 200_000, 7)],
)
STUDY_SIZE_KEYS = (("study", "cases"), ("study", "seed"), ("study", "cell_size"), ("study", "target_change"))
STUDY_SIZE_VALUES: tuple[Any, ...] = (10**9, 10**15, 2**64, 2**63, 1e9, -1, 0, "1e-9 m", "1e-9 K", 10**7)

_NUMBER_FIRST = re.compile(r"^\s*[-+]?(\d|\.\d)")


@dataclass
class Mutant:
    """One mutated input file.

    Attributes
    ----------
    data : bytes
        The file's bytes.
    steps : list of str
        What was done, in order (for the failure message and the script's examples).
    must_fail : str
        Non-empty when any acceptance is a silent misread: which key got which value.
    """

    data: bytes
    steps: list[str] = field(default_factory=list)
    must_fail: str = ""


def _basic_string(text: str) -> str:
    """A TOML basic string: JSON escapes, plus DEL, which TOML does not allow raw."""
    return json.dumps(text, ensure_ascii=False).replace("\x7f", "\\u007f")


def _value(value: Any) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if math.isnan(value):
            return "nan"
        if math.isinf(value):
            return "inf" if value > 0 else "-inf"
        return repr(value)
    if isinstance(value, str):
        return _basic_string(value)
    if isinstance(value, list):
        return "[" + ", ".join(_value(v) for v in value) + "]"
    if isinstance(value, dict):
        return "{" + ", ".join(f"{_basic_string(str(k))} = {_value(v)}" for k, v in value.items()) + "}"
    raise TypeError(f"no TOML form for {type(value).__name__}")


def to_toml(document: dict) -> str:
    """The mapping as TOML text: one ``[table]`` per top-level table, inline tables below it.

    Parameters
    ----------
    document : dict
        A TOML document (strings, ints, floats, booleans, lists, dicts).

    Returns
    -------
    str
        TOML text that :mod:`tomllib` reads back to an equal mapping (NaN aside).
    """
    lines = []
    for key, value in document.items():
        if isinstance(value, dict):
            lines.append(f"[{_basic_string(str(key))}]")
            lines += [f"{_basic_string(str(k))} = {_value(v)}" for k, v in value.items()]
        else:
            lines.insert(0, f"{_basic_string(str(key))} = {_value(value)}")
    return "\n".join(lines) + "\n"


def _paths(node: Any, prefix: tuple = ()) -> list[tuple]:
    """The key paths in ``node`` (dict keys and list indices), parents before children; not below
    depth 8 or into lists longer than 50 (a mutation's own deep or long value)."""
    found: list[tuple] = []
    if len(prefix) >= 8 or (isinstance(node, list) and len(node) > 50):
        return found
    items = node.items() if isinstance(node, dict) else enumerate(node) if isinstance(node, list) else ()
    for key, child in items:
        found.append((*prefix, key))
        found += _paths(child, (*prefix, key))
    return found


def _parent(document: dict, path: tuple) -> Any:
    node = document
    for key in path[:-1]:
        node = node[key]
    return node


def _quantity_paths(document: dict) -> list[tuple]:
    paths = []
    for path in _paths(document):
        value = _parent(document, path)[path[-1]]
        if isinstance(value, str) and _NUMBER_FIRST.match(value):
            paths.append(path)
    return paths


def _set(document: dict, path: tuple, value: Any) -> None:
    node = document
    for key in path[:-1]:
        if not isinstance(node.get(key), dict):
            node[key] = {}
        node = node[key]
    node[path[-1]] = value


def _text(path: tuple) -> str:
    return ".".join(str(k) for k in path)


#: Stands in the mapping for a nesting too deep to build as Python objects; written as raw text.
_DEEP = "@@deeply-nested@@"


def _nested(rng: random.Random) -> Any:
    """A value nested 20 or 200 deep, or the stand-in for 2,000 or 5,000 (filled in as text)."""
    depth = rng.choice((20, 200, 2001, 5000))
    if depth > 200:
        return _DEEP + str(depth)
    value: Any = 1
    for _ in range(depth):
        value = [value] if rng.random() < 0.5 else {"a": value}
    return value


def _fill_deep(text: str) -> str:
    """Each stand-in of :func:`_nested` as that many nested arrays or inline tables."""
    for match in set(re.findall(re.escape(json.dumps(_DEEP))[:-1] + r'(\d+)"', text)):
        depth = int(match)
        deep = "[" * depth + "1" + "]" * depth if depth % 2 else "{a=" * depth + "1" + "}" * depth
        text = text.replace(json.dumps(_DEEP + match), deep)
    return text


def _structural(document: dict, rng: random.Random, steps: list[str]) -> None:
    """One change of keys, types or values (never the must-fail kind)."""
    paths = _paths(document)
    if not paths:
        return
    path = rng.choice(paths)
    parent = _parent(document, path)
    kind = rng.choice(("drop", "drop", "type", "type", "hostile", "scale", "rename", "add", "nest", "size", "dup"))
    if kind == "drop":
        del parent[path[-1]]
        steps.append(f"drop {_text(path)}")
    elif kind == "type":
        parent[path[-1]] = copy.deepcopy(rng.choice(EXTREME_VALUES))
        steps.append(f"{_text(path)} = {_value(parent[path[-1]])[:60]}")
    elif kind == "hostile":
        quantities = _quantity_paths(document)
        target = rng.choice(quantities) if quantities else path
        value = rng.choice(HOSTILE_QUANTITIES)
        _parent(document, target)[target[-1]] = value
        steps.append(f"{_text(target)} = {value[:60]!r}")
    elif kind == "scale":
        quantities = _quantity_paths(document)
        if quantities:
            target = rng.choice(quantities)
            number, _, unit = _parent(document, target)[target[-1]].strip().partition(" ")
            scaled = f"{number}e{rng.choice((-300, -30, -6, -3, -1, 1, 3, 6, 30, 300))} {unit}"
            _parent(document, target)[target[-1]] = scaled
            steps.append(f"{_text(target)} = {scaled!r}")
    elif kind == "rename" and isinstance(parent, dict):
        key = path[-1]
        parent[key + rng.choice(("_", "s", "x"))] = parent.pop(key)
        steps.append(f"rename {_text(path)}")
    elif kind == "add" and isinstance(parent, dict):
        parent[rng.choice(("colour", "unknown_key", "", " ", "\u00e9t\u00e9"))] = rng.choice(EXTREME_VALUES)
        steps.append(f"add a key beside {_text(path)}")
    elif kind == "nest":
        parent[path[-1]] = _nested(rng)
        steps.append(f"{_text(path)} = deeply nested")
    elif kind == "size":
        keys = STUDY_SIZE_KEYS if "study" in document else SIZE_KEYS
        target = rng.choice(keys)
        value = rng.choice(STUDY_SIZE_VALUES if "study" in document else SIZE_VALUES)
        _set(document, target, value)
        steps.append(f"{_text(target)} = {_value(value)[:60]}")
    elif kind == "dup" and isinstance(parent, list):
        parent.append(copy.deepcopy(parent[path[-1]]))
        steps.append(f"repeat {_text(path)}")


def _must_fail(document: dict, rng: random.Random) -> str:
    """Put a misreadable or arithmetic quantity into one quantity field; the key and value."""
    quantities = _quantity_paths(document)
    if not quantities:
        return ""
    path = rng.choice(quantities)
    parent = _parent(document, path)
    number, _, unit = parent[path[-1]].strip().partition(" ")
    digits = number.lstrip("+-")
    value = rng.choice(
        (
            rng.choice(MUST_FAIL_QUANTITIES),
            f"{digits},5 {unit}",
            f"--{digits} {unit}",
            f"+-{digits} {unit}",
            f"{digits}*2 {unit}",
            f"{digits}**2 {unit}",
        )
    )
    parent[path[-1]] = value
    return f"{_text(path)} = {value!r}"


def _damage_bytes(data: bytes, rng: random.Random, steps: list[str]) -> bytes:
    """Damage the encoded file: a null byte, bytes that are not UTF-8, another encoding, a cut."""
    kind = rng.choice(("null", "latin", "invalid", "utf16", "bom", "cut", "crlf", "line"))
    at = rng.randrange(len(data) + 1)
    steps.append(f"bytes: {kind}")
    if kind == "null":
        return data[:at] + b"\x00" + data[at:]
    if kind == "latin":
        return data.decode("utf-8", "replace").replace("\u00b0", "?").encode("latin-1", "replace") + b"\xb0C"
    if kind == "invalid":
        return data[:at] + rng.choice((b"\xff\xfe", b"\xc3", b"\xed\xa0\x80", b"\x80")) + data[at:]
    if kind == "utf16":
        return data.decode("utf-8", "replace").encode("utf-16")
    if kind == "bom":
        return b"\xef\xbb\xbf" + data
    if kind == "cut":
        return data[:at]
    if kind == "crlf":
        return data.replace(b"\n", b"\r\n")
    lines = data.split(b"\n")
    k = rng.randrange(len(lines))
    return b"\n".join(lines[: k + 1] + lines[k:])


def mutate(source: Path, rng: random.Random, changes: int | None = None) -> Mutant:
    """A mutated copy of the TOML file ``source``.

    Parameters
    ----------
    source : Path
        The file to start from (the demo case or the demo study).
    rng : random.Random
        The source of every choice.
    changes : int, optional
        How many structural changes (default: 1 to 3, chosen by ``rng``).

    Returns
    -------
    Mutant
        The bytes, what was done, and whether acceptance would be a silent misread.
    """
    text = source.read_text(encoding="utf-8")
    steps: list[str] = []
    if rng.random() < 0.1:  # the original text, comments and all, with only its bytes damaged
        return Mutant(_damage_bytes(text.encode("utf-8"), rng, steps), steps)
    document = tomllib.loads(text)
    if changes is None and rng.random() < 0.25:  # alone, so that nothing else can be why it is refused
        must_fail = _must_fail(document, rng)
        steps.append(must_fail)
    else:
        must_fail = ""
        for _ in range(rng.randint(1, 3) if changes is None else changes):
            _structural(document, rng, steps)
    data = _fill_deep(to_toml(document)).encode("utf-8")
    if not must_fail and rng.random() < 0.15:
        data = _damage_bytes(data, rng, steps)
    return Mutant(data, steps, must_fail)


#: The outcome classes, in the order the script prints them.
OUTCOMES = ("clear_error", "accepted", "failed", "unclear_error", "silent_misread", "traceback", "hang")
#: The classes that count as unhandled (the issue's measure): a traceback or a hang.
UNHANDLED = ("traceback", "hang")


class Deadline(BaseException):
    """Raised by the in-process watchdog: the input took longer than its time bound.

    A BaseException, so the command line's ``except Exception`` cannot turn it into an exit code.
    """


def error_lines(stderr: str) -> list[str]:
    """The lines of ``stderr`` that are not warnings (``heatstack: warning: ...``)."""
    return [line for line in stderr.splitlines() if line.strip() and not line.startswith("heatstack: warning:")]


def classify(code: int | None, stdout: str, stderr: str, seconds: float, limit: float, must_fail: str) -> str:
    """The outcome class of one run of the command line on a mutant (one of :data:`OUTCOMES`).

    Parameters
    ----------
    code : int or None
        The exit code; None when the run was stopped at its time bound.
    stdout, stderr : str
        What it printed.
    seconds : float
        How long it took [s].
    limit : float
        The time bound [s].
    must_fail : str
        The mutant's must-fail note (non-empty: acceptance is a silent misread).

    Returns
    -------
    str
        ``hang`` (stopped or past the bound), ``traceback`` (a Python traceback printed, an internal
        error, or an exit code other than 0, 1 and 2), ``silent_misread``, ``accepted`` (0),
        ``clear_error`` (2 and one ``heatstack: error:`` line), ``failed`` (1 and one
        ``heatstack: failed:`` line) or ``unclear_error`` (any other error output).
    """
    if code is None or seconds > limit:
        return "hang"
    if "Traceback (most recent call last)" in stdout + stderr or "internal error" in stderr or code not in (0, 1, 2):
        return "traceback"
    if code == 0:
        return "silent_misread" if must_fail else "accepted"
    lines = error_lines(stderr)
    prefix = "heatstack: error:" if code == 2 else "heatstack: failed:"
    if len(lines) == 1 and lines[0].startswith(prefix):
        return "clear_error" if code == 2 else "failed"
    return "unclear_error"


def run_in_process(main, argv: list[str], limit: float) -> tuple[int | None, str, str, float]:
    """Run ``main(argv)`` here, capturing its output, stopped by SIGALRM after ``limit`` seconds.

    Parameters
    ----------
    main : callable
        ``heatstack.cli.main``.
    argv : list of str
        The arguments.
    limit : float
        The time bound [s]; the watchdog fires at twice it (a hang is then certain).

    Returns
    -------
    code : int or None
        The exit code, None if stopped by the watchdog.
    stdout, stderr : str
        What was printed.
    seconds : float
        The wall time taken [s].
    """
    import contextlib
    import io
    import signal
    import time

    def fire(signum, frame):
        raise Deadline(f"stopped after {2 * limit} s")

    out, err = io.StringIO(), io.StringIO()
    previous = signal.signal(signal.SIGALRM, fire)
    signal.setitimer(signal.ITIMER_REAL, 2 * limit)
    started = time.perf_counter()
    code: int | None
    try:
        with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
            code = main(argv)
    except Deadline:
        code = None
    except SystemExit as exc:  # argparse refusing the command line
        code = exc.code if isinstance(exc.code, int) else 2
    except BaseException as exc:  # noqa: BLE001 - an exception that escaped the command line is the finding
        import traceback

        code = -1
        err.write("Traceback (most recent call last)\n" + "".join(traceback.format_exception(exc)))
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, previous)
    return code, out.getvalue(), err.getvalue(), time.perf_counter() - started


def write_mutant(mutant: Mutant, folder: Path, kind: str, base_case: Path = CASE_FILE) -> list[str]:
    """Write ``mutant`` into ``folder`` and return the ``heatstack`` arguments that check it.

    Parameters
    ----------
    mutant : Mutant
        The mutated file.
    folder : Path
        An empty folder of its own.
    kind : str
        ``case`` (``heatstack check``) or ``study`` (``heatstack study --check``, with the demo
        case beside it as its base case).

    Returns
    -------
    list of str
        The command line without the program name.
    """
    if kind == "case":
        path = folder / "case.toml"
        path.write_bytes(mutant.data)
        return ["check", str(path), "--out", str(folder / "out"), "--force"]
    (folder / CASE_FILE.name).write_bytes(base_case.read_bytes())
    path = folder / "study.toml"
    path.write_bytes(mutant.data)
    return ["study", str(path), "--check", "--store", str(folder / "store")]


#: How the demo case is cut short for runs of mutants: a coarse grid and a few simulated minutes.
SHORT_CASE_EDITS = (
    ('cell_size = "4 mm"', 'cell_size = "12 mm"'),
    ('duration = "3 h"', 'duration = "3 min"'),
    ('duration = "5 min"', 'duration = "1 min"'),
    ('snapshot_times = ["1 min", "15 min", "45 min"]', 'snapshot_times = ["1 min"]'),
    ('cooling_below = "150 degC"', 'cooling_below = "30 degC"'),
)


def write_short_case(folder: Path) -> Path:
    """The demo case on a 12 mm grid over a few simulated minutes (a run of a few seconds), in ``folder``.

    Parameters
    ----------
    folder : Path
        Where to write ``short.toml``.

    Returns
    -------
    Path
        The file written.
    """
    text = CASE_FILE.read_text(encoding="utf-8")
    for old, new in SHORT_CASE_EDITS:
        if old not in text:
            raise ValueError(f"the demo case no longer holds {old!r}: update SHORT_CASE_EDITS")
        text = text.replace(old, new)
    path = folder / "short.toml"
    path.write_text(text, encoding="utf-8")
    return path


def write_short_study(folder: Path) -> tuple[Path, Path]:
    """The demo study cut to 3 cases of the short demo case (:func:`write_short_case`), in ``folder``.

    Parameters
    ----------
    folder : Path
        Where to write ``short.toml`` (the base case) and ``study.toml``.

    Returns
    -------
    study, base_case : Path
        The study file and its base case; a mutant of the study runs with a copy of the base case
        beside it (:func:`write_mutant` with ``base_case``).
    """
    base = write_short_case(folder)
    text = STUDY_FILE.read_text(encoding="utf-8")
    for old, new in (("cases = 200", "cases = 3"), ('cell_size = "8 mm"', 'cell_size = "12 mm"')):
        if old not in text:
            raise ValueError(f"the demo study no longer holds {old!r}: update write_short_study")
        text = text.replace(old, new)
    study = folder / "study.toml"
    study.write_text(text, encoding="utf-8")
    return study, base
