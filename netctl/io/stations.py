"""Control stations (decentralized control) from a TOML file.

A stations file holds one ``[stations]`` section, each station a table naming the inputs
it drives and the measured outputs it reads::

    [stations]
    boiler_house = { inputs = ["fuel"], outputs = ["supply_temp"] }
    substations  = { inputs = ["bypass"], outputs = ["return_temp"] }

The same section may sit in a system description (``.toml``, docs/FORMATS.md); either file
can be given. Names refer to the inputs and outputs of the system the stations are for.
"""

from __future__ import annotations

import os

from netctl.io._spec_parts import _SECTIONS, _check_keys, _Doc, _read_stations_table
from netctl.stations import Station, make_stations
from netctl.system import StructuredSystem

__all__ = ["read_stations"]


def read_stations(path: str | os.PathLike[str], system: StructuredSystem
                  ) -> tuple[Station, ...]:
    """Read the ``[stations]`` of ``path`` as :class:`~netctl.system.Station` records.

    Raises
    ------
    NetworkFileError
        Not valid TOML; no ``[stations]`` section; a station naming an input or output
        ``system`` does not have; an input or output in two stations (each message names
        the file, the line and the item).
    MissingFileError
        The file does not exist.
    """
    doc = _Doc(path)
    _check_keys(doc, doc.data, _SECTIONS, "the top level")
    if "stations" not in doc.data:
        raise doc.error("no [stations] section: a stations file lists each station as "
                        "name = { inputs = [...], outputs = [...] } under [stations] "
                        "(see docs/FORMATS.md).")
    table = _read_stations_table(doc, doc.data["stations"], list(system.input_names),
                                 list(system.output_names))
    return make_stations(system, {k: {"inputs": v[0], "outputs": v[1]}
                                  for k, v in table.items()})
