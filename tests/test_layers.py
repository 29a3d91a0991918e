"""The package imports one way: every import, at module top or inside a function, reaches only
its own layer or a lower one (the order DEVELOPERS.md documents), and the drawing libraries
stay in the modules that own them."""

from __future__ import annotations

import ast
import json
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

import kitleaf

PACKAGE = Path(kitleaf.__file__).parent
GUIDE = Path(__file__).resolve().parents[1] / "guides" / "heron-opamp-boost.md"

# Lowest first; a module may import its own layer and every layer below it. The same table
# is in DEVELOPERS.md ("Layers").
LAYERS: tuple[tuple[str, ...], ...] = (
    ("errors",),
    ("engine",),  # the base library: nothing of kitleaf but the errors
    ("__init__", "values", "eseries", "marking", "display", "memory", "registry"),
    ("guide",),
    ("circuit",),
    ("specs",),
    ("bom",),
    ("faults",),
    ("audio",),
    ("render",),
    ("site",),
    ("commands",),
    ("cli", "__main__"),
)
RANK = {name: rank for rank, layer in enumerate(LAYERS) for name in layer}
# Outside libraries that only the named modules may import.
OWNERS = {
    "schemdraw": {"kitleaf.render.schematic", "kitleaf.render.schemdraw_adapter"},
    "matplotlib": {"kitleaf.render.plot"},
    "soundfile": {"kitleaf.audio.encode"},
}


def module_name(path: Path) -> str:
    parts = path.relative_to(PACKAGE.parent).with_suffix("").parts
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


def imported(source: str, module: str, is_package: bool = False) -> list[tuple[int, str]]:
    """Every module ``source`` imports, anywhere in it, as absolute dotted names, with lines."""
    package = module if is_package else module.rpartition(".")[0]
    found = []
    for node in ast.walk(ast.parse(source)):
        if isinstance(node, ast.Import):
            found += [(node.lineno, alias.name) for alias in node.names]
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                parts = package.split(".")
                base = ".".join(parts[: len(parts) - node.level + 1] + [base] * bool(base))
            found += [(node.lineno, _submodule(base, alias.name)) for alias in node.names]
    return found


def _submodule(base: str, name: str) -> str:
    """``from kitleaf import errors`` imports the module kitleaf.errors; other names, ``base``."""
    folder = PACKAGE.parent / base.replace(".", "/")
    return f"{base}.{name}" if (folder / name).is_dir() or (folder / f"{name}.py").exists() \
        else base


def upward(source: str, module: str, is_package: bool = False) -> list[str]:
    """The imports of ``source`` (the text of ``module``) that reach a higher layer."""
    here = layer_of(module)
    return [f"line {line}: {target} ({layer_of(target)} is above {here})"
            for line, target in imported(source, module, is_package)
            if target.split(".")[0] == "kitleaf" and RANK[layer_of(target)] > RANK[here]]


def layer_of(module: str) -> str:
    """The layer name of a kitleaf module: its first part below the package."""
    parts = module.split(".")
    return parts[1] if len(parts) > 1 else "__init__"


def sources() -> list[Path]:
    return sorted(PACKAGE.rglob("*.py"))


@pytest.mark.parametrize("path", sources(), ids=lambda p: str(p.relative_to(PACKAGE)))
def test_imports_go_down_the_layers(path):
    module = module_name(path)
    assert layer_of(module) in RANK, f"place '{layer_of(module)}' in LAYERS and DEVELOPERS.md"
    assert upward(path.read_text(encoding="utf-8"), module, path.name == "__init__.py") == []


@pytest.mark.parametrize("path", sources(), ids=lambda p: str(p.relative_to(PACKAGE)))
def test_drawing_libraries_stay_in_their_modules(path):
    name = module_name(path)
    source = path.read_text(encoding="utf-8")
    wrong = [f"line {line}: {target}" for line, target in imported(source, name)
             if target.split(".")[0] in OWNERS and name not in OWNERS[target.split(".")[0]]]
    assert wrong == []


def test_the_check_sees_imports_inside_functions_and_relative_ones():
    # The checker itself, on a made-up circuit module that reaches up three ways.
    source = ("from kitleaf.circuit.parts import Part\n"
              "def draw(sheet):\n"
              "    from kitleaf.render.schematic import SchematicSheet\n"
              "    from ..specs import model\n"
              "    from kitleaf import site\n")
    assert upward(source, "kitleaf.circuit.probe") == [
        "line 3: kitleaf.render.schematic (render is above circuit)",
        "line 4: kitleaf.specs.model (specs is above circuit)",
        "line 5: kitleaf.site (site is above circuit)",
    ]


def test_the_layers_table_is_the_documented_one():
    text = (PACKAGE.parents[1] / "DEVELOPERS.md").read_text(encoding="utf-8")
    section = text.split("\n## Layers\n", 1)[1].split("\n## ", 1)[0]
    rows = [line for line in section.splitlines() if line.startswith("| ") and "`" in line]
    cells = [row.split("|")[2].strip() for row in rows]
    assert [tuple(name.strip("`") for name in cell.split(", ")) for cell in cells] == list(LAYERS)


def loaded_by(args: list[str], cwd: Path) -> tuple[int, set[str]]:
    """The exit code of ``kitleaf ARGS`` and the top-level packages it imported."""
    code = ("import json, sys; from kitleaf.cli import main; code = main(sys.argv[1:]); "
            "print(json.dumps(sorted({m.split('.')[0] for m in sys.modules})), file=sys.stderr); "
            "sys.exit(code)")
    done = subprocess.run([sys.executable, "-c", code, *args], cwd=cwd, capture_output=True,
                          text=True, timeout=300)
    return done.returncode, set(json.loads(done.stderr.strip().splitlines()[-1]))


def test_the_bom_loads_no_drawing_and_no_solver(tmp_path):
    code, loaded = loaded_by(["bom", str(GUIDE)], tmp_path)
    assert code == 0
    assert not loaded & {"schemdraw", "matplotlib", "numpy", "scipy"}


def test_check_loads_no_drawing(tmp_path):
    (tmp_path / "guides").mkdir()
    shutil.copy(GUIDE, tmp_path / "guides" / GUIDE.name)
    code, loaded = loaded_by(["check", "guides"], tmp_path)
    assert code == 0
    assert "numpy" in loaded  # it solves: the probe sees what a run loads
    assert not loaded & {"schemdraw", "matplotlib"}
