"""Scale: peak resident memory of ``score --no-report`` by model count, and the ``--jobs`` speed-up.

Models are built from the 20 NMR models of ``this/2k5p.pdb`` (SHIFTCHECK_REALDATA) in a temp
directory: COUNT models as one multi-model PDB file and as COUNT single-model files (model k is
model k mod 20). Each run is a fresh ``python -m shiftcheck score`` subprocess; its peak RSS is
``ru_maxrss`` from ``os.wait4`` of that child: the largest of the child and the worker
processes it reaped (the peak of one process, not the sum over --jobs N processes); the
``score`` process's own peak (its VmHWM, written by the child as it exits) is printed beside it,
since the workers' peak does not grow with the count and hides the parent's up to a few
thousand models.

    PYTHONPATH=$PWD python benchmarks/bench_scale.py memory 1000 10000 --jobs 2
    PYTHONPATH=$PWD python benchmarks/bench_scale.py speedup 1000
    PYTHONPATH=$PWD python benchmarks/bench_scale.py memory 10000 --only multi --report

The machine is shared (2 cores): wall times are noisy; run when it is quiet.
"""
from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
from _timing import realdata_root  # noqa: E402


def split_models(pdb: Path) -> tuple[str, list[str]]:
    text = pdb.read_text()
    first = text.index("\nMODEL ") + 1
    head, bodies, pos = text[:first], [], first
    while pos > 0:
        end = text.index("\nENDMDL", pos)
        chunk = text[pos:end + 1]
        bodies.append(chunk[chunk.index("\n") + 1:])
        pos = text.find("\nMODEL ", end) + 1
    return head, bodies


def build(tmp: Path, count: int, head: str, bodies: list[str]) -> tuple[Path, list[Path]]:
    multi = tmp / f"decoys_{count}.pdb"
    if not multi.exists():
        with open(multi, "w") as fh:
            fh.write(head)
            for k in range(count):
                fh.write(f"MODEL     {k + 1:4d}\n{bodies[k % len(bodies)]}ENDMDL\n")
            fh.write("END\n")
    folder = tmp / f"files_{count}"
    folder.mkdir(exist_ok=True)
    files = []
    for k in range(count):
        p = folder / f"decoy_{k + 1:05d}.pdb"
        if not p.exists():
            p.write_text(head + bodies[k % len(bodies)] + "END\n")
        files.append(p)
    return multi, files


def load() -> str:
    """The 1-minute load average (other sessions share the cores)."""
    return f"{os.getloadavg()[0]:.2f}"


def run(shifts: Path, models, out: Path, jobs: int, report: bool = False) -> tuple[float, float]:
    """Wall time (s) and peak RSS (MB, largest process) of one score run in a subprocess."""
    listing = out.with_suffix(".list")
    extra = "" if report else "'--no-report', "
    hwm = out.with_suffix(".hwm")
    cmd = [sys.executable, "-c",
           "import sys; from shiftcheck.cli import main; "
           "rc = main(['score', sys.argv[1], *open(sys.argv[2]).read().split(), '-o', sys.argv[3], "
           f"{extra}'--quiet', '--force', '--jobs', sys.argv[4]]); "
           "open(sys.argv[5], 'w').write([l for l in open('/proc/self/status') if l.startswith('VmHWM')][0]); "
           "sys.exit(rc)",
           str(shifts), str(listing), str(out), str(jobs), str(hwm)]
    listing.write_text("\n".join(str(m) for m in models))
    t = time.perf_counter()
    err = out.with_suffix(".err")
    with open(err, "w") as fh:
        proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=fh,
                                env=dict(os.environ, PYTHONPATH=os.getcwd()))
        _, status, usage = os.wait4(proc.pid, 0)      # this child (and the workers it reaped)
    wall = time.perf_counter() - t
    if os.waitstatus_to_exitcode(status) != 0:
        sys.exit(err.read_text()[-2000:])
    global LAST_CPU, LAST_PARENT
    LAST_CPU = usage.ru_utime + usage.ru_stime         # CPU of the child and its reaped workers
    try:                                               # the score process's own peak (VmHWM)
        LAST_PARENT = int(hwm.read_text().split()[1]) / 1024.0
    except (OSError, IndexError, ValueError):
        LAST_PARENT = float("nan")
    return wall, usage.ru_maxrss / 1024.0


LAST_CPU = 0.0
LAST_PARENT = float("nan")


def main(argv=None) -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("what", choices=["memory", "speedup"])
    ap.add_argument("counts", type=int, nargs="+")
    ap.add_argument("--jobs", type=int, default=2)
    ap.add_argument("--tmp", default=None, help="folder for the generated models (default: a temp dir)")
    ap.add_argument("--only", choices=["multi", "files"], default=None)
    ap.add_argument("--report", action="store_true", help="also write the report (PDF, plots, HTML)")
    a = ap.parse_args(argv)
    data = realdata_root() / "this"
    shifts = data / "2k5p_shifts.str"
    head, bodies = split_models(data / "2k5p.pdb")
    tmp = Path(a.tmp or tempfile.mkdtemp(prefix="shiftcheck-scale-"))
    tmp.mkdir(parents=True, exist_ok=True)
    print(f"machine: {os.cpu_count()} cores (shared, noisy); python {sys.version.split()[0]}; models in {tmp}")
    for count in a.counts:
        multi, files = build(tmp, count, head, bodies)
        kinds = [("one multi-model file", [multi]), ("single-model files", files)]
        if a.only:
            kinds = [kinds[0]] if a.only == "multi" else [kinds[1]]
        for kind, models in kinds:
            if a.what == "memory":
                before = load()
                wall, peak = run(shifts, models, tmp / f"out_{count}", a.jobs, a.report)
                print(f"{count:6d} models, {kind:22s} --jobs {a.jobs}"
                      f"{' with report' if a.report else ' --no-report'}: peak RSS {peak:7.1f} MB "
                      f"(largest process; score process {LAST_PARENT:.1f} MB), {wall:7.1f} s ({LAST_CPU:.1f} s CPU), {count / wall:6.1f} models/s; "
                      f"load average {before} before, {load()} after", flush=True)
            else:
                l0 = load()
                w1, _ = run(shifts, models, tmp / f"out1_{count}", 1)
                c1, l1 = LAST_CPU, load()
                w2, _ = run(shifts, models, tmp / f"out2_{count}", a.jobs)
                print(f"CPU (user+sys, all processes): --jobs 1 {c1:.1f} s, --jobs {a.jobs} {LAST_CPU:.1f} s",
                      flush=True)
                print(f"load average: {l0} before --jobs 1, {l1} before --jobs {a.jobs}, {load()} after",
                      flush=True)
                same = all((tmp / f"out1_{count}" / f).read_bytes() == (tmp / f"out2_{count}" / f).read_bytes()
                           for f in ("ranking.csv", "residues.csv"))
                print(f"{count:6d} models, {kind:22s}: --jobs 1 {w1:7.1f} s, --jobs {a.jobs} {w2:7.1f} s, "
                      f"speed-up {w1 / w2:4.2f}x, tables identical: {same}", flush=True)


if __name__ == "__main__":
    main()
