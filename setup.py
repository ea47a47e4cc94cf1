"""Package discovery for the build (metadata and options live in pyproject.toml).

Every package under linter/ is found on its own (a new parser folder needs no listing); the
built-in rules in the top-level rules/ folder are installed as linter.rules (see package-dir in
pyproject.toml), so that no top-level package named "rules" is ever installed.
"""
from setuptools import find_packages, setup

setup(packages=find_packages(include=["linter", "linter.*"]) + ["linter.rules"])
