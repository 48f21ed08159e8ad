"""Reading YAML files with numbers read as numbers and line numbers kept for errors.

PyYAML's safe loader follows YAML 1.1, whose float pattern needs a decimal point, so
``6e-20`` comes back as the *string* ``"6e-20"``. Cross sections and rate
coefficients are written that way all the time, so the loader here adds a resolver that
reads every decimal number in exponent notation as a float (YAML 1.2 core schema
behaviour). Mappings come back as :class:`LineDict`, a ``dict`` that remembers the line of
each key, so that validation errors can point at the line. Duplicate keys are an error
(PyYAML alone silently keeps the last one).
"""

from __future__ import annotations

import re
from pathlib import Path

import yaml

from .errors import input_error

_FLOAT_1_2 = re.compile(
    r"""^(?:[-+]?(?:[0-9][0-9_]*)\.[0-9_]*(?:[eE][-+]?[0-9]+)?
    |[-+]?(?:[0-9][0-9_]*)(?:[eE][-+]?[0-9]+)
    |\.[0-9_]+(?:[eE][-+]?[0-9]+)?
    |[-+]?\.(?:inf|Inf|INF)
    |\.(?:nan|NaN|NAN))$""",
    re.X,
)


class LineDict(dict):
    """A ``dict`` from YAML that knows the 1-based line of itself and of each key."""

    line: int | None = None
    key_lines: dict

    def line_of(self, key):
        """Line of ``key`` in the file, or of the mapping itself when unknown."""
        return getattr(self, "key_lines", {}).get(key, self.line)


class _Loader(yaml.SafeLoader):
    """Safe loader with YAML 1.2 floats and line-aware mappings."""


_Loader.add_implicit_resolver("tag:yaml.org,2002:float", _FLOAT_1_2, list("-+0123456789."))


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
        return yaml.load(text, Loader=_Loader)  # noqa: S506 - _Loader derives from SafeLoader
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        line = mark.line + 1 if mark is not None else None
        problem = exc.problem or exc.context or "invalid YAML"
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
