"""What a rule gets besides the model: configuration, thresholds, catalogue, and a finding factory."""
from __future__ import annotations

from typing import Any, Optional

from .findings import Finding
from .model import DeckModel, Loc


class Context:
    """Passed to every rule as ``ctx``.

    * ``ctx.config``: the :class:`linter.config.Config` in force;
    * ``ctx.threshold(name)``: a number from ``linter/data/thresholds.yaml`` (overridable in config);
    * ``ctx.catalogue``: the element-technology catalogue (``linter.catalogue``);
    * ``ctx.dialect``: the dialect of the deck being checked;
    * ``ctx.finding(...)``: make a finding of the running rule.
    """

    def __init__(self, model: DeckModel, config):
        self.model = model
        self.config = config
        self.dialect = model.dialect
        self.rule = None  # set by the runner
        self._catalogue = None

    @property
    def catalogue(self):
        if self._catalogue is None:
            from .catalogue import Catalogue

            self._catalogue = Catalogue.load()
        return self._catalogue

    def threshold(self, name: str) -> Any:
        return self.config.threshold(name)

    def finding(self, message: str, loc: Optional[Loc] = None, *, material: Optional[str] = None,
                data: Optional[dict[str, Any]] = None, severity: Optional[str] = None,
                defect: Optional[tuple] = None, restates: tuple = ()) -> Finding:
        """A finding of the running rule; ``severity`` overrides the rule's default for this one."""
        r = self.rule
        sev = severity or r.severity
        return Finding(rule=r.id, severity=sev, message=message,
                       path=loc.path if loc else self.model.path, line=loc.line if loc else None,
                       material=material, data=dict(data or {}), defect=defect, restates=tuple(restates))
