"""The built-in rule pack, installed as ``linter.rules`` (one module per rule family).

Every module in this package is imported when the registry loads, and its
``@rule``-decorated functions register themselves.
"""
import importlib
import pkgutil

for _info in sorted(pkgutil.iter_modules(__path__), key=lambda m: m.name):
    if not _info.name.startswith("_"):
        importlib.import_module(f"{__name__}.{_info.name}")
