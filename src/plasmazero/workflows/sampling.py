"""Scan variations, sample designs and key-path edits of a scenario mapping.

A *variation* names one entry of the scenario mapping by its key path and the values it
takes::

    power.absorbed_W=10:50:5               start:stop:count, linear, both ends included
    power.absorbed_W=log:1:100:5           the same, logarithmic spacing (1, 3.16, 10, ...)
    feed.mole_fractions.H2=0.5,0.67,0.75   a list (numbers or words: discharge.mode=filaments,uniform)
    reactor.packed_bed.surface_losses[0].sticking=1e-4,1e-3

A key path is the chain of mapping keys joined by ``.``; ``[i]`` picks item ``i`` of a list.
Every key of the path must exist in the base mapping (an unknown path is an
:class:`~plasmazero.data.errors.InputError` naming it), except the last key under
``feed.mole_fractions``, which may name a species absent from the base feed (it is added).

Designs
-------
``grid`` (default)
    The cartesian product of the variations' values, the last variation changing
    fastest (the order of :func:`itertools.product`).
``latin:N``
    N points of a Latin hypercube over the variations' ranges
    (:class:`scipy.stats.qmc.LatinHypercube`, seeded): a range ``start:stop:count`` is sampled
    uniformly within [start, stop] (its count is not used), a ``log:`` range uniformly in
    ln(value), a numeric list within [min, max]. Word lists cannot be sampled. McKay,
    Beckman & Conover (1979), Technometrics 21, 239.

Mole fractions
--------------
When entries of ``feed.mole_fractions`` are set, the entries that are set keep their new
values and every other entry is scaled by one common factor so that all add up to 1: the
others keep their ratios and sum to ``1 - x`` (``x`` the sum of the entries set). It is an
error when ``x > 1`` (beyond 1e-9), when a value is outside [0, 1], and when ``x < 1`` but
the other entries are all zero (there is nothing to scale).

Keys that take a whole number (``discharge.pulses``, ``discharge.seed``: the scenario
schema says which) stay whole numbers when the value is integral (``20.0`` -> ``20``); a
non-integral value there is an error. Other keys take any number, also where the base
file happens to write a whole one (``absorbed_W: 10`` varied to 5.9).
"""

from __future__ import annotations

import copy
import itertools
import math
import re
from dataclasses import dataclass

import numpy as np

from plasmazero.data.scenario import is_whole_number_key
from plasmazero.data.errors import InputError, format_problem

#: the key path whose last key may be a new species, and whose entries are renormalised
MOLE_FRACTIONS_PATH = ("feed", "mole_fractions")
#: tolerance on a sum of mole fractions above 1
FRACTION_TOLERANCE = 1e-9

_SEGMENT = re.compile(r"^([^\[\]]+)((?:\[\d+\])*)$")


@dataclass(frozen=True)
class Variation:
    """One varied entry of the scenario mapping.

    Attributes
    ----------
    path : str
        Key path, e.g. ``"power.absorbed_W"``.
    text : str
        The variation as written (``"power.absorbed_W=10:50:5"``).
    kind : str
        ``"range"`` or ``"list"``.
    values : tuple
        The grid values (a range's evenly spaced points, or the list).
    low, high : float
        Bounds for Latin hypercube sampling (NaN for word lists).
    log : bool
        Logarithmic spacing / sampling (``log:`` ranges only).
    """

    path: str
    text: str
    kind: str
    values: tuple
    low: float
    high: float
    log: bool = False


def _number(text):
    """``text`` as a finite float, or None when it is not a number."""
    try:
        value = float(text)
    except ValueError:
        return None
    return value if math.isfinite(value) else None


def parse_variation(text, source=None):
    """Parse one variation ``"key.path=spec"`` (module docstring).

    Parameters
    ----------
    text : str
        The variation.
    source : str or path-like or None
        Where the text came from (a file, or None for the command line), for messages.

    Returns
    -------
    Variation

    Raises
    ------
    InputError
        Naming the variation and what is wrong with it.
    """
    def bad(problem):
        return InputError([format_problem(source, text, problem)])

    if not isinstance(text, str) or "=" not in text:
        raise bad("expected key.path=values (start:stop:count, log:start:stop:count or a,b,c)")
    path, spec = (part.strip() for part in text.split("=", 1))
    if not path or any(not seg for seg in path.split(".")):
        raise bad("empty key path")
    if not spec:
        raise bad("no values after '='")
    log = spec.startswith("log:")
    if log:
        spec = spec[4:]
    if ":" in spec:
        fields = spec.split(":")
        if len(fields) != 3:
            raise bad("a range is start:stop:count")
        start, stop = _number(fields[0]), _number(fields[1])
        if start is None or stop is None:
            raise bad("range start and stop must be finite numbers")
        try:
            count = int(fields[2])
        except ValueError:
            raise bad("range count must be a whole number") from None
        if count < 1:
            raise bad("range count must be at least 1")
        if count == 1 and start != stop:
            raise bad("a range of count 1 needs start == stop")
        if log:
            if start <= 0 or stop <= 0:
                raise bad("a log range needs positive start and stop")
            values = np.geomspace(start, stop, count)
        else:
            values = np.linspace(start, stop, count)
        # exact ends, whatever the rounding of geomspace/linspace
        values[0], values[-1] = start, stop
        return Variation(path=path, text=text, kind="range", values=tuple(float(v) for v in values),
                         low=min(start, stop), high=max(start, stop), log=log)
    if log:
        raise bad("log: applies to ranges start:stop:count only")
    items = [item.strip() for item in spec.split(",")]
    if any(not item for item in items):
        raise bad("empty item in the list")
    numbers = [_number(item) for item in items]
    if all(n is not None for n in numbers):
        return Variation(path=path, text=text, kind="list", values=tuple(numbers),
                         low=min(numbers), high=max(numbers))
    if any(n is not None for n in numbers):
        raise bad("a list mixes numbers and words")
    lowered = [item.lower() for item in items]
    if any(w in ("nan", "inf", "+inf", "-inf", "infinity") for w in lowered):
        raise bad("values must be finite numbers")
    return Variation(path=path, text=text, kind="list", values=tuple(items),
                     low=math.nan, high=math.nan)


def parse_variations(texts, source=None):
    """Parse several variations; every problem is reported together; paths must be distinct."""
    problems, out, seen = [], [], set()
    for text in texts:
        try:
            var = parse_variation(text, source)
        except InputError as exc:
            problems.extend(exc.problems)
            continue
        if var.path in seen:
            problems.append(format_problem(source, text, f"key path {var.path!r} is varied twice"))
        seen.add(var.path)
        out.append(var)
    if problems:
        raise InputError(problems)
    return tuple(out)


def parse_design(text):
    """``"grid"`` -> ("grid", None); ``"latin:N"`` -> ("latin", N). InputError otherwise."""
    text = str(text).strip()
    if text == "grid":
        return "grid", None
    if text.startswith("latin:"):
        try:
            n = int(text[6:])
        except ValueError:
            n = 0
        if n >= 1:
            return "latin", n
    raise InputError([format_problem(None, "design", f"{text!r}: expected grid or latin:N (N >= 1)")])


def grid_points(variations):
    """Cartesian product of the values: list of tuples, last variation fastest."""
    return [tuple(p) for p in itertools.product(*(v.values for v in variations))]


def latin_points(variations, n_samples, seed):
    """``n_samples`` Latin hypercube points over the variations' bounds (module docstring).

    References
    ----------
    McKay, M. D., Beckman, R. J. & Conover, W. J. (1979), A comparison of three methods for
    selecting values of input variables in the analysis of output from a computer code,
    Technometrics 21, 239-245.
    """
    from scipy.stats import qmc

    words = [v.text for v in variations if not all(isinstance(x, float) for x in v.values)]
    if words:
        raise InputError([format_problem(None, t, "a list of words cannot be sampled by latin:N; "
                                         "use the grid design") for t in words])
    if not variations:
        return []
    unit = qmc.LatinHypercube(d=len(variations), rng=np.random.default_rng(seed)).random(n_samples)
    points = np.empty_like(unit)
    for c, v in enumerate(variations):
        if v.log:
            lo, hi = math.log(v.low), math.log(v.high)
            points[:, c] = np.exp(lo + unit[:, c] * (hi - lo))
        else:
            points[:, c] = v.low + unit[:, c] * (v.high - v.low)
    return [tuple(float(x) for x in row) for row in points]


def split_path(path):
    """``"a.b[2].c"`` -> ``["a", "b", 2, "c"]`` (ValueError for a malformed path)."""
    out = []
    for seg in path.split("."):
        m = _SEGMENT.match(seg)
        if m is None:
            raise ValueError(f"malformed key path segment {seg!r}")
        out.append(m.group(1))
        out.extend(int(i) for i in re.findall(r"\[(\d+)\]", m.group(2)))
    return out


def plain(obj):
    """Deep copy of a YAML mapping as plain ``dict``/``list`` (no line bookkeeping)."""
    if isinstance(obj, dict):
        return {k: plain(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [plain(v) for v in obj]
    return copy.copy(obj)


def _convert(old, new, where, file):
    """The value stored for ``new`` replacing ``old`` (whole-number keys stay whole)."""
    if (isinstance(old, int) and not isinstance(old, bool) and isinstance(new, float)
            and is_whole_number_key(where)):
        if not new.is_integer():
            raise InputError([format_problem(file, where, f"expects a whole number, got {new:g}")])
        return int(new)
    return new


def apply_values(base, values, file=None):
    """A copy of ``base`` with the entries of ``values`` set (module docstring).

    Parameters
    ----------
    base : dict
        The scenario mapping (not changed).
    values : dict
        Key path -> value.
    file : path-like or None
        Named in error messages (the scenario file).

    Returns
    -------
    dict
        Plain nested dicts and lists.

    Raises
    ------
    InputError
        Unknown key paths, impossible mole fractions, a fraction for a whole number;
        every problem together.
    """
    doc = plain(base)
    problems = []
    fractions_set = {}
    for path, value in values.items():
        try:
            keys = split_path(path)
        except ValueError as exc:
            problems.append(format_problem(file, path, str(exc)))
            continue
        node = doc
        ok = True
        for depth, key in enumerate(keys[:-1]):
            child = _child(node, key)
            if child is None or not isinstance(child, (dict, list)):
                where = _join(keys[:depth + 1])
                what = "not found" if child is None else "is not a mapping or list"
                problems.append(format_problem(file, path, f"unknown key path ({where} {what} in the scenario)"))
                ok = False
                break
            node = child
        if not ok:
            continue
        last = keys[-1]
        is_fraction = tuple(keys[:-1]) == MOLE_FRACTIONS_PATH and isinstance(node, dict)
        if is_fraction:
            if not isinstance(value, (int, float)) or isinstance(value, bool) or not 0.0 <= value <= 1.0:
                problems.append(format_problem(file, path, f"a mole fraction must be in [0, 1], got {value!r}"))
                continue
            fractions_set[last] = float(value)
            node[last] = float(value)
            continue
        if _child(node, last) is None:
            problems.append(format_problem(file, path, "unknown key path (not found in the scenario)"))
            continue
        try:
            node[last] = _convert(node[last], value, path, file)
        except InputError as exc:
            problems.extend(exc.problems)
    if fractions_set and not problems:
        try:
            _renormalise(doc, fractions_set, file)
        except InputError as exc:
            problems.extend(exc.problems)
    if problems:
        raise InputError(problems)
    return doc


def _child(node, key):
    if isinstance(node, dict):
        return node.get(key) if key in node else None
    if isinstance(node, list) and isinstance(key, int):
        return node[key] if key < len(node) else None
    return None


def _join(keys):
    out = ""
    for k in keys:
        out += f"[{k}]" if isinstance(k, int) else (f".{k}" if out else str(k))
    return out


def renormalised_fractions(fractions, fixed, where="feed.mole_fractions", file=None):
    """Mole fractions with the entries of ``fixed`` set and the others scaled to 1 - sum(fixed).

    Parameters
    ----------
    fractions : dict
        Species -> mole fraction of the base feed.
    fixed : dict
        Species -> new mole fraction (each in [0, 1]).

    Returns
    -------
    dict
        All species of both, adding up to 1 (to rounding).

    Raises
    ------
    InputError
        ``sum(fixed) > 1``, or the others all zero while ``sum(fixed) < 1``.
    """
    x = sum(fixed.values())
    names = ", ".join(sorted(fixed))
    if x > 1.0 + FRACTION_TOLERANCE:
        raise InputError([format_problem(file, where, f"the mole fractions set ({names}) add up to {x:.9g} > 1")])
    others = {k: float(v) for k, v in fractions.items() if k not in fixed}
    rest = sum(others.values())
    out = dict(fractions)
    out.update(fixed)
    if rest <= 0.0:
        if abs(1.0 - x) > FRACTION_TOLERANCE:
            raise InputError([format_problem(
                file, where, f"the mole fractions set ({names}) add up to {x:.9g} and the other "
                "species are all zero, so nothing can make up the rest")])
        return out
    scale = max(1.0 - x, 0.0) / rest
    for k, v in others.items():
        out[k] = v * scale
    return out


def _renormalise(doc, fixed, file):
    node = doc
    for key in MOLE_FRACTIONS_PATH:
        node = node[key]
    new = renormalised_fractions(dict(node), fixed, file=file)
    node.clear()
    node.update(new)
