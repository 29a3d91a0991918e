"""The growing families (stage kinds, design rules, prose plugins) are registered one way, in
the order their modules are listed, and that order is the one their documentation gives."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from kitleaf.circuit import stages
from kitleaf.registry import add
from kitleaf.render import prose
from kitleaf.specs import rules

DOCS = Path(__file__).resolve().parents[1] / "docs"


def public_modules(package) -> set[str]:
    folder = Path(package.__file__).parent
    return {p.stem for p in folder.glob("*.py") if not p.stem.startswith("_")}


@pytest.mark.parametrize("package", [stages, rules], ids=["kinds", "rules"])
def test_every_module_of_a_family_folder_is_listed_once(package):
    assert len(set(package.MODULES)) == len(package.MODULES)
    assert set(package.MODULES) == public_modules(package)


def test_kinds_run_in_the_order_the_kinds_page_lists_them():
    text = (DOCS / "stage-kinds.md").read_text(encoding="utf-8")
    section = text.split("\n## Kinds\n", 1)[1].split("\n## ", 1)[0]
    assert re.findall(r"^### `([a-z-]+)`$", section, flags=re.M) == list(stages.KINDS)


def test_rules_run_in_the_order_the_rules_table_lists_them():
    text = (DOCS / "claims-and-rules.md").read_text(encoding="utf-8")
    section = text.split("\n## Design rules\n", 1)[1].split("\n## ", 1)[0]
    listed = re.findall(r"^\| `([a-z-]+)` \|", section, flags=re.M)
    # The last row is the finding check_rules adds itself about an allow: line.
    assert listed == [*rules.RULES, "unused-allow"]


def test_the_prose_renderer_uses_every_listed_plugin():
    prose.prose_renderer()
    assert list(prose.PLUGINS) == ["computed-values", "placement"]


def test_each_kind_s_knob_and_switch_roles_are_listed_as_they_are():
    """The 'Knob roles:' and 'Switch role:' lines name the pot and switch roles, in the role
    table's order (the custom kind's parts are knobs by the kit block's naming alone)."""
    text = (DOCS / "stage-kinds.md").read_text(encoding="utf-8")
    section = text.split("\n## Kinds\n", 1)[1].split("\n## ", 1)[0]
    chunks = re.split(r"^### `([a-z-]+)`$", section, flags=re.M)
    for name, body in zip(chunks[1::2], chunks[2::2], strict=True):
        roles = [r for r in stages.KINDS[name].roles if not r.nodes]
        for label, part in (("Knob roles", "pot"), ("Switch role", "switch")):
            line = re.search(label.replace(" ", r"\s+") + r":\s+(.*?)\.", body, flags=re.S)
            listed = re.findall(r"`([a-z-]+)`", line.group(1)) if line else []
            assert listed == [r.name for r in roles if part in r.part_types], (name, label)


def test_a_name_registered_twice_is_refused():
    family = {"one": 1}
    with pytest.raises(ValueError, match="registered twice"):
        add(family, "one", 2, "test member")
    assert add(family, "two", 2, "test member") == 2 and family == {"one": 1, "two": 2}


def test_each_kind_s_role_table_is_its_roles():
    text = (DOCS / "stage-kinds.md").read_text(encoding="utf-8")
    section = text.split("\n## Kinds\n", 1)[1].split("\n## ", 1)[0]
    chunks = re.split(r"^### `([a-z-]+)`$", section, flags=re.M)
    for name, body in zip(chunks[1::2], chunks[2::2], strict=True):
        documented = re.findall(r"^\| `([a-z-]+)` \|", body, flags=re.M)
        assert documented == [r.name for r in stages.KINDS[name].roles], name
