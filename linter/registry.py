"""The rule registry.

A rule is a small function ``(model, ctx) -> iterable of Finding`` registered
with :func:`rule`. Built-in rules live in ``linter.rules`` (the top-level
``rules/`` folder of the source tree); third-party packs register through the
entry-point group ``deckwarden.rules`` (the entry point names a module, which
registers its rules with :func:`rule` on import, or a callable returning
:class:`Rule` objects).
"""
from __future__ import annotations

import re
import types
from dataclasses import dataclass
from typing import Callable, Iterable, Optional

from .findings import SEVERITIES

FAMILIES = ("elastic", "aniso", "hyper", "plastic", "property", "units", "element", "model",
            "analysis", "parse", "internal")
ENTRY_POINT_GROUP = "deckwarden.rules"
_ID = re.compile(r"^[a-z][a-z0-9]*(?:-[a-z0-9]+)*/[a-z0-9]+(?:-[a-z0-9]+)*$")


@dataclass(frozen=True)
class Rule:
    id: str
    severity: str
    title: str
    rationale: str
    func: Optional[Callable]
    references: tuple[str, ...] = ()
    #: what the finding's ``data`` holds
    data: str = ""
    #: formats the rule applies to (None: all)
    formats: Optional[tuple[str, ...]] = None
    #: dialects the rule applies to (None: all)
    dialects: Optional[tuple[str, ...]] = None
    #: emitted by the engine itself (parse driver, runner) rather than run as a function
    engine: bool = False
    pack: str = "builtin"
    #: when a finding of the rule takes another level than ``severity`` (empty: never)
    escalation: str = ""
    #: a finding of this rule means part of the input was not checked: the check is incomplete (exit code 2)
    incomplete: bool = False
    #: the thresholds (dotted keys of ``linter/data/thresholds.yaml``) the rule reads, directly or through
    #: the derivation it reports on (``deckwarden explain`` lists them with their values)
    thresholds: tuple[str, ...] = ()
    #: reported by a run-level stage after every deck was checked (it compares decks): the decks' suppression
    #: comments of it are settled then (``linter.suppressions.settle_run_level``)
    run_level: bool = False

    @property
    def family(self) -> str:
        return self.id.split("/", 1)[0]


_RULES: dict[str, Rule] = {}
_loaded = False
_plugin_errors: list[tuple[str, str]] = []


def register(r: Rule) -> Rule:
    if not _ID.match(r.id):
        raise ValueError(f"rule id {r.id!r} is not of the form family/name in lower-case kebab style")
    if r.pack == "builtin" and r.family not in FAMILIES:
        raise ValueError(f"built-in rule {r.id!r}: unknown family {r.family!r}")
    if r.severity not in SEVERITIES:
        raise ValueError(f"rule {r.id!r}: severity must be one of {SEVERITIES}")
    if r.id in _RULES and _RULES[r.id].func is not r.func:
        raise ValueError(f"rule {r.id!r} registered twice")
    _RULES[r.id] = r
    return r


def rule(id: str, *, severity: str, title: str, rationale: str, references: Iterable[str] = (),
         data: str = "", formats: Optional[Iterable[str]] = None, dialects: Optional[Iterable[str]] = None,
         pack: Optional[str] = None, incomplete: bool = False, thresholds: Iterable[str] = (),
         escalation: str = ""):
    """Decorator: register ``fn(model, ctx)`` as rule ``id``."""

    def deco(fn: Callable) -> Callable:
        mod = getattr(fn, "__module__", "") or ""
        the_pack = pack or ("builtin" if mod.startswith("linter.rules") else mod.split(".")[0])
        fn.rule = register(Rule(id=id, severity=severity, title=title, rationale=rationale, func=fn,
                                references=tuple(references), data=data,
                                formats=tuple(formats) if formats else None,
                                dialects=tuple(dialects) if dialects else None, pack=the_pack,
                                incomplete=incomplete, thresholds=tuple(thresholds), escalation=escalation))
        return fn

    return deco


def engine_rule(id: str, *, severity: str, title: str, rationale: str, references: Iterable[str] = (),
                data: str = "", incomplete: bool = False) -> Rule:
    """Register a rule whose findings the engine itself emits (parse driver, runner)."""
    return register(Rule(id=id, severity=severity, title=title, rationale=rationale, func=None,
                         references=tuple(references), data=data, engine=True, incomplete=incomplete))


def load(plugins: bool = True) -> dict[str, Rule]:
    """Import the built-in pack and (once) the entry-point plugins; return the registry."""
    global _loaded
    if not _loaded:
        _loaded = True
        _import_builtin_pack()
        if plugins:
            _load_plugins()
    return _RULES


def _import_builtin_pack() -> None:
    """Import ``linter.rules``; from a source checkout that was not installed, load ``rules/`` under that name."""
    try:
        import linter.rules  # noqa: F401  (registers the built-in pack)
        return
    except ModuleNotFoundError as exc:
        if exc.name != "linter.rules":
            raise
    import importlib.util
    import sys
    from pathlib import Path

    folder = Path(__file__).resolve().parent.parent / "rules"
    spec = importlib.util.spec_from_file_location("linter.rules", folder / "__init__.py",
                                                  submodule_search_locations=[str(folder)])
    if spec is None or spec.loader is None:  # pragma: no cover
        raise ModuleNotFoundError("the built-in rule pack (rules/) is missing")
    module = importlib.util.module_from_spec(spec)
    sys.modules["linter.rules"] = module
    spec.loader.exec_module(module)


def _load_plugins() -> None:
    from .entrypoints import entry_points

    for ep in entry_points(ENTRY_POINT_GROUP):
        try:
            obj = ep.load()
            if isinstance(obj, types.ModuleType) or hasattr(obj, "rule"):
                continue  # importing the module / decorating the function registered it
            if isinstance(obj, Rule):
                register(obj)
            elif callable(obj):
                for r in obj() or ():
                    if isinstance(r, Rule):
                        register(r)
        except Exception as exc:  # a broken plugin must not stop the check
            _plugin_errors.append((ep.name, f"{type(exc).__name__}: {exc}"))


def plugin_errors() -> list[tuple[str, str]]:
    return list(_plugin_errors)


def get(rule_id: str) -> Optional[Rule]:
    return load().get(rule_id)


def makes_incomplete(findings) -> bool:
    """Whether any of ``findings`` comes from a rule declared ``incomplete`` (exit code 2)."""
    rules = load()
    for f in findings:
        r = rules.get(f.rule)
        if r is not None and r.incomplete:
            return True
    return False


def all_rules() -> list[Rule]:
    return sorted(load().values(), key=lambda r: r.id)
