"""The record of a whole run, handed to the exporters: RunResult.

It holds the case file's records (geomload.config.schema.Case), the geometry stage's, the
aero stage's, every CaseResult, the two envelopes and the error bars, so it sits above every
stage that makes them (the stages' own records are named together in :mod:`geomload.records`). Frozen, checked
when built, never changed after: a later step that adds to a run (the error bars, the export
time) builds a new one with ``dataclasses.replace``.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Mapping, Optional

from geomload.aero.convergence import ErrorBars
from geomload.config.schema import Case
from geomload.aero.records import Lattice
from geomload.geometry.records import Planform, Stations, Wing, WingFrame, WingMesh
from geomload.loads.case_records import CaseResult
from geomload.loads.envelope_records import LoadsEnvelope, VnDiagram
from geomload.messages import Message
from geomload.record_checks import check_items, check_type, set_field


@dataclass(frozen=True)
class RunResult:
    """Everything `geomload run` computed, handed to the exporters.

    case_path: the case file; case_text: its text (echoed in the report); case: the Case
    records; mesh, frame, stations, planform, lattice; cases: tuple of CaseResult; envelope:
    the envelope of loads (LoadsEnvelope); vn: tuple of VnDiagram, or None without an
    [envelope]; alpha_sweep: tuple of (alpha_deg, CL) from the lattice at the first case's
    Mach; messages: tuple of Message (kind, text); timings: step -> seconds; versions:
    package -> version (both read-only mappings); error_bars: ErrorBars (discretization error
    of the root loads) or None when not estimated; wing: the geometry stage's whole `Wing`
    record (bodies, control surfaces, tailplane, warnings, exposed/gross planform), or None
    when built without one.
    """

    case_path: str
    case_text: str
    case: Case
    mesh: WingMesh
    frame: WingFrame
    stations: Stations
    planform: Planform
    lattice: Lattice
    cases: tuple
    envelope: Optional[LoadsEnvelope] = None
    vn: Optional[tuple] = None
    alpha_sweep: tuple = ()
    messages: tuple = ()
    timings: Mapping[str, float] = field(default_factory=dict)
    versions: Mapping[str, str] = field(default_factory=dict)
    error_bars: Optional[ErrorBars] = None
    wing: Optional[Wing] = None

    def __post_init__(self):
        check_type("RunResult.case", self.case, Case)
        for k, kind in (("mesh", WingMesh), ("frame", WingFrame), ("stations", Stations),
                        ("planform", Planform), ("lattice", Lattice)):
            check_type(f"RunResult.{k}", getattr(self, k), kind)
        check_type("RunResult.wing", self.wing, Wing, optional=True)
        check_type("RunResult.envelope", self.envelope, LoadsEnvelope, optional=True)
        check_type("RunResult.error_bars", self.error_bars, ErrorBars, optional=True)
        set_field(self, "cases", check_items("RunResult.cases", self.cases, CaseResult))
        if self.vn is not None:
            set_field(self, "vn", check_items("RunResult.vn", self.vn, VnDiagram))
        set_field(self, "messages", check_items("RunResult.messages", self.messages, Message))
        set_field(self, "alpha_sweep", tuple((a, cl) for a, cl in self.alpha_sweep))
        set_field(self, "timings", MappingProxyType({str(k): float(v)
                                                     for k, v in dict(self.timings).items()}))
        set_field(self, "versions", MappingProxyType({str(k): str(v)
                                                      for k, v in dict(self.versions).items()}))

    @property
    def warnings(self) -> list:
        """The messages in the earlier string form: "note: ..." for notes, bare text for
        warnings."""
        return [f"note: {m.text}" if m.kind == "note" else m.text for m in self.messages]


__all__ = ["RunResult"]
