"""The package's layers import only downward (DEVELOPERS.md, "Layout").

Internal architecture check: data -> physics -> numerics -> workflows -> interfaces. A
module may import from its own layer and from layers before it, never after it.
"""

import ast
from pathlib import Path

import plasmazero

LAYERS = ["data", "physics", "numerics", "workflows", "interfaces"]
ROOT = Path(plasmazero.__file__).parent


def _imports(path, root=ROOT):
    tree = ast.parse(path.read_text(encoding="utf-8"))
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for alias in node.names:
                yield alias.name
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                rel = path.relative_to(root).parts[: -node.level]
                base = ".".join(("plasmazero",) + rel)
                yield f"{base}.{node.module}" if node.module else base
            elif node.module:
                yield node.module


def _layer(module):
    parts = module.split(".")
    if parts[0] != "plasmazero" or len(parts) < 2:
        return None
    return LAYERS.index(parts[1]) if parts[1] in LAYERS else None


def violations(root):
    """Upward imports found in the package tree at ``root``."""
    bad = []
    for path in root.rglob("*.py"):
        own = _layer("plasmazero." + ".".join(path.relative_to(root).with_suffix("").parts))
        if own is None:
            continue
        for mod in _imports(path, root):
            other = _layer(mod)
            if other is not None and other > own:
                bad.append(f"{path.relative_to(root)} imports {mod}")
    return bad


def test_lower_layers_never_import_higher_ones():
    bad = violations(ROOT)
    assert not bad, "layering violated:\n" + "\n".join(bad)


def test_layering_check_sees_a_violation(tmp_path):
    # the check must be able to fail: upward imports, absolute and relative, are found
    (tmp_path / "data").mkdir()
    (tmp_path / "data" / "bad.py").write_text(
        "from plasmazero.workflows import x\nfrom ..interfaces import cli\nimport numpy\n")
    (tmp_path / "interfaces").mkdir()
    (tmp_path / "interfaces" / "ok.py").write_text("from ..data import bad\n")
    found = violations(tmp_path)
    assert len(found) == 2 and all(f.startswith("data") for f in found)
