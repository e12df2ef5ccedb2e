"""Data flows down the layers of DESIGN.md, never back up: checked on the import graph."""

import ast
from pathlib import Path

PKG = Path(__file__).resolve().parents[1] / "dipolearray"

# Lower number = lower layer. Base modules may be imported by everyone.
LAYERS = {
    "materials": 1,
    "shapes": 2,
    "arrange": 3,
    "scene": 4,
    "operators": 5,
    "solvers": 6,
    "observables": 7,
    "mixing": 8,
    "spectra": 8,
    "store": 9,
    "sweep": 10,
    "plots": 11,
    "config": 11,
    "report": 12,
    "cli": 13,
}
BASE = {"errors", "units", "_validate", "_version"}


def _layer_of(parts):
    if not parts:
        return None
    return parts[0] if parts[0] in LAYERS or parts[0] in BASE else None


def _imports(path):
    rel = path.relative_to(PKG).with_suffix("").parts
    tree = ast.parse(path.read_text())
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom):
            if node.level:
                base = list(rel[: len(rel) - node.level])
                mod = base + (node.module.split(".") if node.module else [])
                names = [mod + [a.name] for a in node.names] if not node.module else [mod]
            else:
                if not (node.module or "").startswith("dipolearray"):
                    continue
                names = [node.module.split(".")[1:]]
            yield from names
        elif isinstance(node, ast.Import):
            for a in node.names:
                if a.name.startswith("dipolearray."):
                    yield a.name.split(".")[1:]


def test_no_lower_layer_imports_a_higher_one():
    bad = []
    files = [p for p in PKG.rglob("*.py") if p.name != "__init__.py" or p.parent != PKG]
    assert len(files) > 20
    for path in files:
        own = _layer_of(path.relative_to(PKG).parts)
        if own is None or own in BASE:
            own_level = 0 if own in BASE else None
        else:
            own_level = LAYERS[own]
        if own_level is None:
            continue
        for target in _imports(path):
            t = _layer_of(target)
            if t is None or t == own:
                continue
            level = 0 if t in BASE else LAYERS[t]
            if level > own_level:
                bad.append(f"{path.relative_to(PKG)} imports {'.'.join(target)}")
    assert not bad, "upward imports:\n" + "\n".join(bad)


def test_numba_only_in_kernels():
    offenders = []
    for path in PKG.rglob("*.py"):
        rel = path.relative_to(PKG).parts
        if rel[:2] in (("operators", "_kernels"), ("arrange", "_kernels")):
            continue
        text = path.read_text()
        if "import numba" in text or "from numba" in text:
            offenders.append(str(path.relative_to(PKG)))
    assert not offenders


def test_h5py_only_in_store():
    offenders = [
        str(p.relative_to(PKG))
        for p in PKG.rglob("*.py")
        if "store" not in p.parts and ("import h5py" in p.read_text())
    ]
    assert not offenders


def test_top_level_import_is_light():
    import subprocess
    import sys

    code = "import sys, dipolearray; print(any(m in sys.modules for m in ('numba', 'h5py', 'matplotlib')))"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"
