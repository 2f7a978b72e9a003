"""The hook surface is small, fully documented, and the contributor guide shows it as it is."""

import inspect

import pluggy
from developers_blocks import DEVELOPERS, render

from saltbench.models import hookspecs
from saltbench.models.discovery import HOOK_NAMES


def test_every_hook_is_a_documented_spec():
    specs = {n for n in dir(hookspecs) if hasattr(getattr(hookspecs, n), "saltbench_spec")}
    assert specs == set(HOOK_NAMES)
    for name in HOOK_NAMES:
        fn = getattr(hookspecs, name)
        doc = inspect.getdoc(fn) or ""
        assert len(doc.split()) >= 15, f"hook {name} needs a real docstring"
        assert "Called" in doc, f"hook {name} must say when it is called"
        assert list(inspect.signature(fn).parameters) == ["context"]


def test_hooks_return_lists_per_plugin():
    # pluggy collects one result per implementation; our hooks are not firstresult
    pm = pluggy.PluginManager(hookspecs.PROJECT)
    pm.add_hookspecs(hookspecs)
    for name in HOOK_NAMES:
        assert not getattr(pm.hook, name).spec.opts.get("firstresult")


def test_developers_guide_hook_reference_is_current():
    text = DEVELOPERS.read_text(encoding="utf-8")
    assert render(text) == text, "run python tests/developers_blocks.py --update"
