"""STEP and IGES through the OpenCASCADE kernel (cascadio), run in a child process.

The kernel can crash (SIGSEGV) on a corrupted file and prints its own parser messages; both stay
in the child. The child is ended with the parent: it asks the Linux kernel for SIGKILL when its
parent dies (prctl PR_SET_PDEATHSIG), watches its parent's pid as a fallback, and the parent kills
and reaps it on any exception (KeyboardInterrupt, SystemExit from a SIGTERM handler, timeout).

Units: the kernel's GLB output is in metres for STEP (it applies the file's length unit). The
file's own unit is read here too (STEP: the SI_UNIT / CONVERSION_BASED_UNIT of the length unit;
IGES: the global section's unit flag, IGES 5.3 section 2.2.4.3, parameters 14 and 15), so that
IGES is scaled from its unit and `units=` can override either.
"""

from __future__ import annotations

import os
import re

from ...errors import GeometryError

FORMATS = {".step": "step", ".stp": "step", ".iges": "iges", ".igs": "iges"}
BREP_TIMEOUT_S = 300.0  # a very large assembly takes minutes; beyond that the kernel is stuck

# IGES 5.3, section 2.2.4.3, global parameter 14 (units flag) -> metres per unit
IGES_UNIT_FLAGS = {1: 0.0254, 2: 1e-3, 3: None, 4: 0.3048, 5: 1609.344, 6: 1.0, 7: 1000.0,
                   8: 2.54e-5, 9: 1e-6, 10: 1e-2, 11: 2.54e-8}
IGES_UNIT_NAMES = {"IN": 0.0254, "INCH": 0.0254, "MM": 1e-3, "FT": 0.3048, "MI": 1609.344, "M": 1.0,
                   "KM": 1000.0, "MIL": 2.54e-5, "UM": 1e-6, "CM": 1e-2, "UIN": 2.54e-8}
UNIT_LABELS = {1.0: "m", 1e-3: "mm", 1e-2: "cm", 0.0254: "in", 0.3048: "ft"}

_CHILD = r"""
import os, sys, threading, time
src, dst, kind, parent = sys.argv[1], sys.argv[2], sys.argv[3], int(sys.argv[4])
try:  # SIGKILL this child when its parent dies (Linux)
    import ctypes, signal
    ctypes.CDLL(None, use_errno=True).prctl(1, int(signal.SIGKILL), 0, 0, 0)  # PR_SET_PDEATHSIG
except Exception:
    pass
def _watch():
    while True:
        if os.getppid() != parent:
            os._exit(5)
        time.sleep(0.5)
threading.Thread(target=_watch, daemon=True).start()
if os.getppid() != parent:
    os._exit(5)
try:
    import cascadio
    with open(src, "rb") as f:
        data = f.read()
    glb = cascadio.load(data, file_type=kind, tol_linear=1e-3, tol_angular=0.2, tol_relative=True)
except Exception as exc:
    with open(dst + ".err", "w") as f:
        f.write((str(exc).strip().splitlines() or [type(exc).__name__])[0][:120])
    sys.exit(4)
if not glb:
    sys.exit(3)
with open(dst, "wb") as f:
    f.write(glb)
"""


def read(path, ext, size):
    """(bodies, None): bodies in the file's own unit converted to metres by the kernel (STEP)
    or by the IGES unit flag; see `file_unit` for the unit the file declares."""
    import io

    from .meshfiles import scene_bodies

    glb = brep_to_glb(path, ext)
    bodies, _ = scene_bodies(io.BytesIO(glb), "glb", ext, path)
    return bodies, 1.0


def iges_unit(path):
    """Metres per model unit of an IGES file from its global section (None when not stated)."""
    with open(path, "rb") as f:
        head = f.read(1 << 20).decode("latin-1")
    glob = "".join(line[:72] for line in head.splitlines() if len(line) >= 73 and line[72] == "G")
    if not glob:
        return None
    pdelim, rdelim = ",", ";"
    if glob.startswith("1H"):
        pdelim = glob[2]
        rest = glob[3:]
        if rest.startswith(pdelim):
            rest = rest[1:]
        if rest.startswith("1H"):
            rdelim = rest[2]
    params = _split_params(glob, pdelim, rdelim)
    try:
        flag = int(float(params[13])) if len(params) > 13 and params[13].strip() else 1
    except ValueError:
        return None
    scale = IGES_UNIT_FLAGS.get(flag)
    if scale is None and len(params) > 14:  # flag 3: the unit is named in parameter 15
        name = re.sub(r"^\d+H", "", params[14].strip()).upper()
        scale = IGES_UNIT_NAMES.get(name)
    return scale


def _split_params(text, pdelim, rdelim):
    """Split IGES free-format parameters, skipping Hollerith strings (nH...)."""
    out, cur, i = [], "", 0
    while i < len(text):
        m = re.match(r"\s*(\d+)H", text[i:])
        if m and cur.strip() == "":
            n = int(m.group(1))
            j = i + m.end()
            cur = text[i:j + n]
            i = j + n
            continue
        ch = text[i]
        if ch == pdelim or ch == rdelim:
            out.append(cur)
            cur = ""
            if ch == rdelim:
                break
        else:
            cur += ch
        i += 1
    return out


_STEP_PREFIX = {".MILLI.": 1e-3, ".CENTI.": 1e-2, ".DECI.": 0.1, ".KILO.": 1e3, "$": 1.0, ".MICRO.": 1e-6}


def step_unit(path):
    """Metres per model unit of a STEP file's length unit (None when not found)."""
    with open(path, "rb") as f:
        text = f.read(4 << 20).decode("latin-1").upper()
    m = re.search(r"LENGTH_UNIT\s*\(\s*\)[^;]*?SI_UNIT\s*\(\s*([^,\s]+)\s*,\s*\.METRE\.\s*\)", text)
    if m is None:
        m = re.search(r"SI_UNIT\s*\(\s*([^,\s]+)\s*,\s*\.METRE\.\s*\)", text)
    conv = re.search(r"CONVERSION_BASED_UNIT\s*\(\s*'(INCH|FOOT|IN|FT)'", text)
    if conv:
        return 0.0254 if conv.group(1) in ("INCH", "IN") else 0.3048
    if m:
        return _STEP_PREFIX.get(m.group(1))
    return None


def file_unit(path, ext):
    """Metres per model unit as the file declares it, or None."""
    try:
        return iges_unit(path) if FORMATS[ext] == "iges" else step_unit(path)
    except OSError:
        return None


def brep_to_glb(path, ext):
    """GLB bytes of a STEP/IGES file, translated by cascadio in a child process.

    Raises GeometryError naming the file when the kernel crashes, times out, raises, or gives
    no solid; the kernel's own messages are captured and dropped. The child is killed and
    reaped whatever happens in the parent.
    """
    import subprocess
    import sys
    import tempfile

    kind = FORMATS[ext]
    what = f"{path}: cannot read as {kind.upper()}"
    with tempfile.TemporaryDirectory(prefix="geomload-brep-") as tmp:
        dst = os.path.join(tmp, "out.glb")
        try:
            p = subprocess.Popen([sys.executable, "-c", _CHILD, os.path.abspath(path), dst, kind,
                                  str(os.getpid())],
                                 stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL,
                                 stderr=subprocess.DEVNULL)
        except OSError as exc:
            raise GeometryError(f"{what} (the CAD kernel could not be started: "
                                f"{exc.strerror or exc})") from None
        try:
            rc = p.wait(timeout=BREP_TIMEOUT_S)
        except subprocess.TimeoutExpired:
            raise GeometryError(f"{what} (the CAD kernel did not finish within "
                                f"{BREP_TIMEOUT_S:g} s)") from None
        finally:
            if p.poll() is None:  # timeout, KeyboardInterrupt, SystemExit: never leave it running
                p.kill()
                p.wait()
        if rc == 3:
            raise GeometryError(f"{what} (the CAD kernel could not translate it: no solid or "
                                f"surface found)")
        if rc == 4:
            with open(dst + ".err", encoding="utf-8", errors="replace") as f:
                msg = f.read().strip() or "error"
            raise GeometryError(f"{what} (the CAD kernel could not read it: {msg})")
        if rc != 0:
            how = f"crashed, signal {-rc}" if rc < 0 else f"crashed, exit status {rc}"
            raise GeometryError(f"{what} (the CAD kernel could not read it ({how}))")
        try:
            with open(dst, "rb") as f:
                return f.read()
        except OSError:
            raise GeometryError(f"{what} (the CAD kernel wrote no mesh)") from None
