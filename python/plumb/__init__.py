"""plumb: structure profiles of very large networks, straight from edge-list dumps.

``profile(path, **options)`` returns the same document as ``plumb profile --json`` (a dict);
``open(path, **options)`` reads a file into a :class:`Graph` with per-node numpy arrays.
Options are the command line's long options spelt with ``_`` (``exact_within=5``,
``clustering="sampled"``, ``level=0.99``, ``columns="sender,recipient"``, ``threads=2``); see
``option_names()``. Work runs with the GIL released. Failures raise :class:`PlumbError`
subclasses carrying the command line's message, the file, the line and the byte offset.
"""

from ._plumb import (
    BudgetError,
    Graph,
    InputError,
    OptionError,
    PlumbError,
    ReadError,
    __version__,
    open,
    option_names,
    profile,
)

__all__ = [
    "BudgetError",
    "Graph",
    "InputError",
    "OptionError",
    "PlumbError",
    "ReadError",
    "__version__",
    "open",
    "option_names",
    "profile",
]
