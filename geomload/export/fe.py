"""The structural hand-off of a run: spar beam load decks for a general FE solver, the loads
mapped onto the analyst's own mesh, and the spar sizing table.

- :mod:`geomload.export.fe_nodes`: one case's loads lumped onto the spar stations, exactly;
- :mod:`geomload.export.fe_deck`: the beam deck (CalculiX's open input syntax), the nodal-loads
  CSV and the root reaction read back from the solver;
- :mod:`geomload.export.mesh_map`: the loads on a structural mesh; :mod:`geomload.export.sizing`.

Frames and units: the decks and the nodal-loads CSV are in the CAD frame and the CAD unit the
user chose (the stored WingFrame transform applied back); forces in N, moments in N*unit.
"""

from __future__ import annotations

import os
from pathlib import Path

from geomload.export import mesh_map, sizing
from geomload.export.atomic import safe_name, write_text_atomic
from geomload.export.fe_deck import (DECK_DIGITS, NOMINAL_E_PA, NOMINAL_NU,  # noqa: F401
                                     NOMINAL_SECTION_M, SUPPORT_ARM_FRACTION, BeamDeck,
                                     beam_deck, nodal_loads_csv, read_reactions, root_reaction)
from geomload.export.fe_nodes import (MERGE_FRACTION, SAME_NODE_M, NodalLoads,  # noqa: F401
                                      internal_loads, nodal_loads, to_cad)
from geomload.geometry.units import UNITS


def deck_texts(loads_list, frame=None, unit_scale_m: float = 1.0, unit: str = "m",
               title: str = "") -> list:
    """[(case name, beam deck text, nodal-loads CSV text)] of each SpanLoads of loads_list (no
    file written: it can run in another process)."""
    out = []
    for loads in loads_list:
        nl = nodal_loads(loads)
        cad = to_cad(nl, frame, unit_scale_m)  # once for both texts
        out.append((loads.case, beam_deck(nl, frame, unit_scale_m, unit, title, cad=cad).text,
                    nodal_loads_csv(nl, frame, unit_scale_m, unit, cad=cad)))
    return out


def write_fe_decks(folder, loads_list, frame=None, unit_scale_m: float = 1.0, unit: str = "m",
                   inputs=(), title: str = "", texts=None) -> list:
    """Write fe/<case>.inp and fe/<case>_nodal_loads.csv for each SpanLoads of loads_list.

    folder : the run folder; files go to folder/fe/. Returns the list of paths written. All
    decks are built before the first file is written, so a bad case writes nothing.
    texts : `deck_texts` of the same arguments made elsewhere (another process); used when it
    names the same cases in the same order, else the decks are built here.
    """
    if not (isinstance(texts, list) and len(texts) == len(loads_list)
            and all(t[0] == L.case for t, L in zip(texts, loads_list))):
        texts = deck_texts(loads_list, frame, unit_scale_m, unit, title)
    taken, paths = set(), []
    d = str(Path(folder) / "fe")  # joined as strings (safe_name: no separator, never '..')
    for case, deck, csv in texts:
        name = safe_name(case, taken)
        paths.append(write_text_atomic(os.path.join(d, f"{name}.inp"), deck, inputs))
        paths.append(write_text_atomic(os.path.join(d, f"{name}_nodal_loads.csv"), csv, inputs))
    return paths


# The decks of a run with many cases are formatted in a forked child process while this one
# writes the loads tables (geomload.forked: the child writes no file; if it fails, the decks
# are built here, the same text). Below MIN_FORKED_CASES the fork costs more than it saves.
MIN_FORKED_CASES = 200


def _deck_job(loads_list, frame, scale, unit) -> dict:  # pragma: no cover - runs in the child
    return {"decks": deck_texts(loads_list, frame, scale, unit)}


def start_deck_process(run):
    """A ForkedJob formatting every case's beam deck and nodal-loads CSV of `run` (see
    `write_structural_handoff(deck_job=...)`), or None when the run has too few cases or
    fork is unavailable."""
    if len(run.cases) < MIN_FORKED_CASES:
        return None
    from geomload.forked import ForkedJob

    unit, scale = cad_unit(run)
    return ForkedJob.start(_deck_job, ([c.loads for c in run.cases], run.frame, scale, unit),
                           names=("decks",), what="FE deck")


# --------------------------------------------------------------------------- one call per run
def cad_unit(run):
    """(unit label, metres per unit) of the run's CAD file. A file that carried its own unit
    (STEP, ...) keeps it: its scale is stored on the mesh when read; the label is the length
    unit of that scale when it is one of ours, else "cad" (with the scale in the files)."""
    u = getattr(run.mesh, "units", "m")
    if u in UNITS:
        return u, UNITS[u]
    scale = float(getattr(run.mesh, "unit_scale_m", 1.0) or 1.0)
    for name, s in UNITS.items():
        if abs(s - scale) <= 1e-12 * s:
            return name, s
    return "cad", scale


def write_structural_handoff(run, folder, inputs=(), structural_mesh=None, material=None,
                             sigma_allow_Pa=None, tau_allow_Pa=None, front_spar_fraction=0.15,
                             rear_spar_fraction=0.65, cap_depth_factor=None, plot=True,
                             deck_job=None) -> dict:
    """Every structural hand-off output of a RunResult, into folder:

    fe/<case>.inp and fe/<case>_nodal_loads.csv for every case (the envelope's governing cases
    are cases of the run); with structural_mesh (a path meshio reads, CAD frame and unit) the
    mapped loads fe/mesh_<case>_*; sizing.csv (+ sizing.png when plot).
    Returns {"files": [paths], "warnings": [one-line warnings]}. Everything that can fail on
    bad input (mesh, material, fractions) is checked before the first file is written.
    deck_job : `start_deck_process(run)`, the decks' texts formatted in a child process (None:
    formatted here; so are they when the child fails).
    """
    unit, scale = cad_unit(run)
    mat = sizing.material(material or (None if sigma_allow_Pa is not None else "al-2024-t3"),
                          sigma_allow_Pa, tau_allow_Pa)
    siz = sizing.size_from_run(run, front_spar_fraction, rear_spar_fraction, mat=mat,
                               depth_factor=cap_depth_factor or sizing.DEPTH_FACTOR)
    loads = [c.loads for c in run.cases]
    warnings = [f"sizing: {w}" for w in siz.warnings]
    if material is None and sigma_allow_Pa is None:
        warnings.append(f"sizing: no material given; {mat.name} used ({mat.source})")
    if structural_mesh is not None:  # read and map first: a bad mesh writes nothing
        smesh = mesh_map.read_structural_mesh(structural_mesh)
        for L in loads:
            mesh_map.map_loads(smesh, L, run.frame, scale, run.stations)
    texts = deck_job.result().get("decks") if deck_job is not None else None
    files = write_fe_decks(folder, loads, run.frame, scale, unit, inputs, texts=texts)
    if structural_mesh is not None:
        paths, w = mesh_map.write_mesh_loads(folder, structural_mesh, loads, run.frame, scale,
                                             unit, run.stations, inputs)
        files += paths
        warnings += w
    files += sizing.write_sizing(folder, siz, inputs, plot=plot)
    return {"files": files, "warnings": warnings}


__all__ = ["write_structural_handoff", "write_fe_decks", "deck_texts", "start_deck_process", "cad_unit", "NodalLoads", "nodal_loads",
           "internal_loads", "to_cad", "BeamDeck", "beam_deck", "nodal_loads_csv",
           "read_reactions", "root_reaction"]
