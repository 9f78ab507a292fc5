"""Stage kinds as units: each kind is one module of this package that declares its
positions, circuit, bias and small-signal hooks, pruning bounds, seeds and drawing
features, and registers itself (registry.py).  Adding a kind is adding a module
and naming it in `registry.BUILTIN`."""

from optimizer.kinds.registry import ByKind, Kind, Names, get, names, register  # noqa: F401
