"""The unit system of a deck: evidence gathered from the model (``evidence``), the inference
(``infer``), the diagnosis of a disagreeing material (``diagnose``) and the derivation that runs
them (``derive``)."""
from .derive import derive_units  # noqa: F401  (registers the derivation)
