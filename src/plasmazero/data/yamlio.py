"""Reading YAML files with numbers read as numbers and line numbers kept for errors.

PyYAML's safe loader follows YAML 1.1, whose float pattern needs a decimal point, so
``6e-20`` comes back as the *string* ``"6e-20"``. Cross sections and rate
coefficients are written that way all the time, so the loader here reads every decimal
number in exponent notation as a float (YAML 1.2 core schema behaviour). YAML 1.1 also
reads ``NO``, ``no``, ``off``, ``y`` and ``n`` as booleans (so ``gas: NO``, nitric oxide,
became ``False``), ``010`` as the octal 8 and ``1:30`` as the sexagesimal 90; here, as in
the YAML 1.2 core schema, only ``true``/``false`` are booleans and integers are decimal
(or ``0x``/``0o`` prefixed), everything else stays a string. Mappings come back as
:class:`LineDict`, a ``dict`` that remembers the line of each key, so that validation
errors can point at the line. Duplicate keys are an error (PyYAML alone silently keeps
the last one).
"""

from __future__ import annotations

import math
import re
from pathlib import Path

import yaml

from .errors import input_error

_FLOAT_1_2 = re.compile(
    r"""^(?:[-+]?(?:[0-9][0-9_]*)\.[0-9_]*(?:[eE][-+]?[0-9]+)?
    |[-+]?(?:[0-9][0-9_]*)(?:[eE][-+]?[0-9]+)
    |[-+]?\.[0-9_]+(?:[eE][-+]?[0-9]+)?
    |[-+]?\.(?:inf|Inf|INF)
    |\.(?:nan|NaN|NAN))$""",
    re.X,
)
_INT_1_2 = re.compile(r"^(?:[-+]?[0-9][0-9_]*|0o[0-7]+|0x[0-9a-fA-F]+)$")
_BOOL_1_2 = re.compile(r"^(?:true|True|TRUE|false|False|FALSE)$")
_YAML_1_1_TAGS = ("tag:yaml.org,2002:bool", "tag:yaml.org,2002:int", "tag:yaml.org,2002:float")


class LineDict(dict):
    """A ``dict`` from YAML that knows the 1-based line of itself and of each key."""

    line: int | None = None
    key_lines: dict

    def line_of(self, key):
        """Line of ``key`` in the file, or of the mapping itself when unknown."""
        return getattr(self, "key_lines", {}).get(key, self.line)


#: libyaml's parser when PyYAML was built with it (several times faster on large
#: mechanisms); constructors and resolvers stay the safe Python ones either way
_SAFE_BASE = getattr(yaml, "CSafeLoader", yaml.SafeLoader)


class _Loader(_SAFE_BASE):
    """Safe loader with YAML 1.2 booleans, integers and floats, and line-aware mappings."""


# YAML 1.2 core schema for booleans, integers and floats: drop PyYAML's YAML 1.1 resolvers
# for these three tags (a fresh dict of fresh lists, so yaml.SafeLoader is left untouched).
_Loader.yaml_implicit_resolvers = {
    first: [(tag, regexp) for tag, regexp in resolvers if tag not in _YAML_1_1_TAGS]
    for first, resolvers in yaml.SafeLoader.yaml_implicit_resolvers.items()
}
_Loader.add_implicit_resolver("tag:yaml.org,2002:bool", _BOOL_1_2, list("tTfF"))
_Loader.add_implicit_resolver("tag:yaml.org,2002:int", _INT_1_2, list("-+0123456789"))
_Loader.add_implicit_resolver("tag:yaml.org,2002:float", _FLOAT_1_2, list("-+0123456789."))


def _construct_int(loader, node):
    """Integer of the YAML 1.2 core schema: decimal, ``0o`` octal or ``0x`` hexadecimal."""
    text = loader.construct_scalar(node).replace("_", "")
    if text.startswith("0o"):
        return int(text[2:], 8)
    if text.startswith("0x"):
        return int(text[2:], 16)
    return int(text, 10)


_Loader.add_constructor("tag:yaml.org,2002:int", _construct_int)


def _construct_mapping(loader, node):
    loader.flatten_mapping(node)
    out = LineDict()
    out.line = node.start_mark.line + 1
    out.key_lines = {}
    for key_node, value_node in node.value:
        key = loader.construct_object(key_node, deep=True)
        try:
            hash(key)
        except TypeError:
            raise yaml.constructor.ConstructorError(
                None, None, f"unhashable key {key!r}", key_node.start_mark
            ) from None
        if key in out:
            raise yaml.constructor.ConstructorError(
                None, None, f"duplicate key {key!r}", key_node.start_mark
            )
        out[key] = loader.construct_object(value_node, deep=True)
        out.key_lines[key] = key_node.start_mark.line + 1
    return out


_Loader.add_constructor(yaml.resolver.BaseResolver.DEFAULT_MAPPING_TAG, _construct_mapping)


def parse_yaml(text, file=None):
    """Parse YAML ``text``; syntax problems raise :class:`InputError` naming ``file`` and line."""
    try:
        return yaml.load(text, Loader=_Loader)  # noqa: S506 - _Loader derives from (C)SafeLoader
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        line = mark.line + 1 if mark is not None else None
        problem = exc.problem or exc.context or "invalid YAML"
        if exc.problem and exc.context:
            problem = f"{exc.problem} ({exc.context})"
        raise input_error(file, None, f"YAML syntax: {problem}", line) from None
    except yaml.YAMLError as exc:
        raise input_error(file, None, f"YAML syntax: {exc}") from None


def read_yaml(path):
    """Read a YAML file; a missing or unreadable file raises :class:`InputError`."""
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise input_error(path, None, "file not found") from None
    except IsADirectoryError:
        raise input_error(path, None, "is a directory, expected a YAML file") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise input_error(path, None, f"cannot read file ({exc})") from None
    return parse_yaml(text, file=path)


def line_of(mapping, key=None):
    """Line of ``key`` in a :class:`LineDict` (or of the mapping); None for plain objects."""
    if isinstance(mapping, LineDict):
        return mapping.line_of(key) if key is not None else mapping.line
    return None


def is_finite_number(value):
    """True for an int or float (not bool) that is finite as a float64.

    Integers too large for a float (YAML reads ``1e400`` as inf, but ``10000...0`` as an
    int) count as not finite instead of raising OverflowError.
    """
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return False
    try:
        return math.isfinite(float(value))
    except OverflowError:
        return False
