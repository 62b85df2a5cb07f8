"""Type stubs of plumb's Python package (the compiled module ``plumb._plumb``)."""

from os import PathLike
from typing import Any, Union

import numpy as np
import numpy.typing as npt

__version__: str

_Path = Union[str, PathLike[str]]
_Value = Union[str, int, float, bool, None, list[Union[str, int, float]], tuple[Union[str, int, float], ...]]

class PlumbError(Exception):
    """Any failure of plumb."""

    message: str
    """The command line's message for the same failure."""
    path: str | None
    """The file concerned, when there is one."""
    line: int | None
    """Line (or Parquet row) of the input, from 1, for errors placed in the input."""
    byte_offset: int | None
    """Byte offset of that line's start in the (decompressed) text."""
    exit_code: int
    """The command line's exit status for the same failure."""

class InputError(PlumbError):
    """The input is malformed or breaks a limit (exit code 3)."""

class ReadError(PlumbError):
    """A file could not be opened, read or written (exit code 4)."""

class BudgetError(PlumbError):
    """The work would exceed the memory budget or the scratch disk (exit code 5)."""

class OptionError(PlumbError):
    """An option is unknown or its value is refused (exit code 2)."""

def profile(path: _Path, **options: _Value) -> dict[str, Any]:
    """Profile an edge list, Matrix Market, Parquet or store file.

    Returns the same document as ``plumb profile --json``. Options are the command line's
    input and figure options spelt with ``_``, plus ``threads``.
    """

def open(path: _Path, **options: _Value) -> Graph:
    """Read an edge list, Matrix Market, Parquet or store file into a Graph.

    Options are the command line's input options spelt with ``_``, plus ``threads``.
    """

def option_names() -> list[str]:
    """Every keyword ``profile()`` accepts."""

class Graph:
    """A loaded graph; per-node arrays are indexed by dense node index (ascending original id)."""

    @property
    def nodes(self) -> int:
        """Number of nodes."""
    @property
    def edges(self) -> int:
        """Undirected edges after removing self-loops and repeated pairs."""
    @property
    def path(self) -> str:
        """The file the graph was read from."""
    @property
    def intake(self) -> dict[str, Any]:
        """What reading found (the profile document's ``intake`` part)."""
    @property
    def ids(self) -> npt.NDArray[Any]:
        """Original ids: int64 (uint64 past its range) for integer ids, else an object array of str."""
    @property
    def degree(self) -> npt.NDArray[np.uint32]:
        """Degree of each node (in the symmetrised graph when directed)."""
    @property
    def directed(self) -> bool:
        """Whether the file was read with ``directed=True``."""
    @property
    def out_degree(self) -> npt.NDArray[np.uint32] | None:
        """Out-degree of each node for a directed graph, else None."""
    @property
    def in_degree(self) -> npt.NDArray[np.uint32] | None:
        """In-degree of each node for a directed graph, else None."""
    @property
    def triangles(self) -> npt.NDArray[np.uint64]:
        """Triangles through each node, counted exactly on first use."""
    @property
    def clustering(self) -> npt.NDArray[np.float64]:
        """Local clustering coefficient of each node (0 where the degree is under 2)."""
    @property
    def component(self) -> npt.NDArray[np.uint32]:
        """Component by size rank: 1 is the giant component."""
    def table(self) -> Any:
        """The per-node table as a pandas DataFrame (needs pandas)."""
    def profile(self, **options: _Value) -> dict[str, Any]:
        """Profile this graph: the same document as ``plumb profile --json``."""
    def __len__(self) -> int: ...
