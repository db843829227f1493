"""Whole-pipeline speed against the cost of reading: ``score --no-report``, size scaling, start-up.

    SHIFTCHECK_REALDATA=../shared/realdata python benchmarks/bench_pipeline.py [--repeat 3]

Prints, side by side in one run (best of ``--repeat`` runs each; the machine may be shared, so
the load average is printed at the start and the end):

1. The 200-model ensemble: the 20 NMR models of ``this/2k5p.pdb`` (78 residues, 1,180 atom
   sites a model, hydrogens included) written ten times over into one temporary multi-model PDB
   file (MODEL 1..200). Times ``gemmi.read_structure`` on that file, ``shiftcheck score
   --no-report`` in-process (``shiftcheck.cli.main``, imports already loaded) and as a
   subprocess (``python -m shiftcheck``, start-up included), with atoms per second and the
   ratio to gemmi's read. Shifts: ``this/2k5p_shifts.str``.
2. Per-atom time of reading + predicting at about 60 and about 1,000 residues: the 20-model
   NMR ensemble of chymotrypsin inhibitor 2 (``ci2/3CI2.pdb``, 64 residues, hydrogens in the
   file) against a synthetic 1,000-residue chain made from the crystal structure of sensory
   rhodopsin II (``sensory_rhodopsin/1H68.pdb``, 217 protein residues): its protein residues
   copied end to end (each copy moved 10 A beyond the previous one along x, so copies do not
   touch; the chain is broken between copies, which the torsion code sees as a chain break)
   and cut at 1,000 residues, two identical models; shiftcheck builds its hydrogens, as for
   any crystal structure. Per-atom time = time / (models x atoms after hydrogen building).
   The two differ in more than length (an NMR ensemble with its protons against a crystal
   structure of a membrane protein rich in aromatic rings, protons built), so a second pair
   isolates the length: model 1 of 3CI2 prepared the same way (``build_long_chain``, protons
   removed and rebuilt, two models) at 64 and at 1,000 residues (CI2 copied end to end).
3. ``python -m shiftcheck --help`` wall time.
4. Separate files against one file (``--files N``, default 1000; 0 skips): the first N models
   of the 200-model set above written as N single-model files and as one N-model file; times
   ``score --no-report`` in-process on each (one run: the file count makes it long) and, for
   the library, ``read_models`` + ``Predictor.predict_many`` on the N files (same-topology
   files predicted as one stack) against ``read_models`` + ``predict`` on the one file.

The compiled kernels (numba, ``shiftcheck[fast]``) are used when installed; set
``SHIFTCHECK_NUMBA=0`` to time the numpy path.
"""
from __future__ import annotations

import argparse
import contextlib
import io
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from _timing import best_of, realdata_root


def cpu_of(fn, n: int = 3) -> float:
    """Least CPU time (user + system, this process and the child processes it reaped) of ``n``
    calls of ``fn()``: less sensitive than wall time to other jobs on a shared machine."""
    import resource

    def now():
        ch = resource.getrusage(resource.RUSAGE_CHILDREN)
        return time.process_time() + ch.ru_utime + ch.ru_stime

    times = []
    for _ in range(n):
        t = now()
        fn()
        times.append(now() - t)
    return min(times)


def build_repeated(src: Path, dest: Path, copies: int) -> int:
    """Write the MODEL blocks of ``src`` ``copies`` times into ``dest``; return the model count."""
    head, models, cur = [], [], None
    for line in src.read_text().splitlines(keepends=True):
        if line.startswith("MODEL"):
            cur = []
        elif line.startswith("ENDMDL"):
            models.append(cur)
            cur = None
        elif cur is not None:
            cur.append(line)
        elif not models and line.startswith(("HEADER", "EXPDTA", "CRYST1")):
            head.append(line)
    out, k = list(head), 0
    for _ in range(copies):
        for m in models:
            k += 1
            out += [f"MODEL     {k:4d}\n", *m, "ENDMDL\n"]
    dest.write_text("".join(out) + "END\n")
    return k


def build_long_chain(src: Path, dest: Path, n_res: int = 1000, n_models: int = 2) -> None:
    """Protein residues of ``src`` copied end to end into one chain of ``n_res`` residues."""
    import gemmi

    st = gemmi.read_structure(str(src))
    st.remove_ligands_and_waters()
    st.remove_hydrogens()
    chain = st[0][0]
    res = [r for r in chain if gemmi.find_tabulated_residue(r.name) is not None
           and gemmi.find_tabulated_residue(r.name).is_amino_acid()]
    xs = [a.pos.x for r in res for a in r]
    step = max(xs) - min(xs) + 10.0
    out = gemmi.Structure()
    out.cell = st.cell
    for mi in range(n_models):
        model = gemmi.Model(str(mi + 1))
        ch = gemmi.Chain("A")
        k = 0
        while k < n_res:
            for r in res:
                if k >= n_res:
                    break
                nr = r.clone()
                nr.seqid = gemmi.SeqId(k + 1, " ")
                for a in nr:
                    a.pos = gemmi.Position(a.pos.x + step * (k // len(res)), a.pos.y, a.pos.z)
                ch.add_residue(nr)
                k += 1
        model.add_chain(ch)
        out.add_model(model)
    out.setup_entities()
    dest.write_text(out.make_pdb_string())


def files_vs_one(tmp: Path, ens200: Path, shifts: Path, n: int) -> None:
    """Part 4: n single-model files against one n-model file (see the module docstring)."""
    from shiftcheck.cli import main as cli_main
    from shiftcheck.io.coords import read_models
    from shiftcheck.predict.model import Predictor

    blocks, cur = [], None
    for line in ens200.read_text().splitlines(keepends=True):
        if line.startswith("MODEL"):
            cur = []
        elif line.startswith("ENDMDL"):
            blocks.append(cur)
            cur = None
        elif cur is not None:
            cur.append(line)
    folder = tmp / "files"
    folder.mkdir()
    paths = []
    for k in range(n):
        p = folder / f"decoy_{k + 1:05d}.pdb"
        p.write_text("".join(blocks[k % len(blocks)]) + "END\n")
        paths.append(p)
    one = tmp / f"one_{n}.pdb"
    one.write_text("".join(f"MODEL     {k + 1:4d}\n" + "".join(blocks[k % len(blocks)]) + "ENDMDL\n"
                           for k in range(n)) + "END\n")

    def cli(models):
        with contextlib.redirect_stdout(io.StringIO()):
            rc = cli_main(["score", str(shifts), *map(str, models), "-o", str(tmp / "out_f"),
                           "--no-report", "--quiet", "--force"])
        assert rc == 0, rc

    pred = Predictor()
    t_files = best_of(lambda: cli(paths), 1)
    t_one = best_of(lambda: cli([one]), 1)
    many = getattr(pred, "predict_many", lambda ens: [pred.predict(e) for e in ens])   # older versions
    t_lib_files = best_of(lambda: many(read_models(paths)), 1)
    t_lib_one = best_of(lambda: pred.predict(read_models([one])[0]), 1)
    print(f"{n} single-model files against one {n}-model file:")
    print(f"  score --no-report, in-process: {t_files:7.2f} s against {t_one:6.2f} s = {t_files / t_one:5.2f} x")
    print(f"  read_models + predict_many:    {t_lib_files:7.2f} s against {t_lib_one:6.2f} s = "
          f"{t_lib_files / t_lib_one:5.2f} x")


def _score_args(shifts, pdb, outdir):
    return ["score", str(shifts), str(pdb), "-o", str(outdir), "--no-report", "--quiet", "--force"]


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--repeat", type=int, default=3, help="runs per figure; the best is kept")
    ap.add_argument("--files", type=int, default=1000, help="single-model files for part 4 (0: skip)")
    a = ap.parse_args(argv)
    print("load average (1, 5, 15 min) at start: " + " ".join(f"{x:.2f}" for x in os.getloadavg()))
    data = realdata_root()
    import gemmi

    import shiftcheck
    from shiftcheck.cli import main as cli_main
    from shiftcheck.io.coords import read_models
    from shiftcheck.predict.model import Predictor

    root = Path(shiftcheck.__file__).resolve().parents[1]      # the subprocess runs the same code
    print(f"shiftcheck from {root}")
    env = dict(os.environ, PYTHONPATH=str(root) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    with tempfile.TemporaryDirectory(prefix="shiftcheck-bench-") as tmp:
        tmp = Path(tmp)
        pdb = tmp / "ens200.pdb"
        n_models = build_repeated(data / "this" / "2k5p.pdb", pdb, 10)
        shifts = data / "this" / "2k5p_shifts.str"
        n_sites = sum(m.count_atom_sites() for m in gemmi.read_structure(str(pdb)))
        t_gemmi = best_of(lambda: gemmi.read_structure(str(pdb)), a.repeat)
        out = tmp / "out"

        def run_inproc(*extra):
            with contextlib.redirect_stdout(io.StringIO()):
                rc = cli_main(_score_args(shifts, pdb, out) + list(extra))
            assert rc == 0, rc

        t_first = time.perf_counter()
        run_inproc()
        t_first = time.perf_counter() - t_first
        t_in = best_of(run_inproc, a.repeat)
        cmd = [sys.executable, "-m", "shiftcheck", *_score_args(shifts, pdb, out)]
        t_sub = best_of(lambda: subprocess.run(cmd, env=env, check=True, capture_output=True), a.repeat)
        t_one = best_of(lambda: run_inproc("--jobs", "1"), a.repeat)
        print(f"200-model ensemble: {n_models} models of 2k5p, {n_sites} atom sites, "
              f"{pdb.stat().st_size / 1e6:.1f} MB")
        print(f"  {'step (wall time)':<42} {'time':>8} {'atoms/s':>10} {'x gemmi':>8}")
        for label, t in (("gemmi.read_structure", t_gemmi),
                         ("score --no-report, in-process", t_in),
                         ("  (first in-process call)", t_first),
                         ("score --no-report, subprocess", t_sub),
                         ("score --no-report --jobs 1, in-process", t_one)):
            print(f"  {label:<42} {t:8.3f} {n_sites / t / 1e3:9.0f}k {t / t_gemmi:8.1f}")
        c_gemmi = cpu_of(lambda: gemmi.read_structure(str(pdb)), a.repeat)
        cpu = (("gemmi.read_structure", c_gemmi),
               ("score --no-report, in-process (+ workers)", cpu_of(run_inproc, a.repeat)),
               ("score --no-report, subprocess (+ workers)",
                cpu_of(lambda: subprocess.run(cmd, env=env, check=True, capture_output=True), a.repeat)),
               ("score --no-report --jobs 1, in-process", cpu_of(lambda: run_inproc("--jobs", "1"), a.repeat)))
        print(f"  {'step (CPU time, all processes)':<42} {'CPU s':>8} {'':>10} {'x gemmi':>8}")
        for label, t in cpu:
            print(f"  {label:<42} {t:8.3f} {'':>10} {t / c_gemmi:8.1f}")

        # --- size scaling: about 60 against about 1,000 residues
        small = data / "ci2" / "3CI2.pdb"
        large = tmp / "long1000.pdb"
        build_long_chain(data / "sensory_rhodopsin" / "1H68.pdb", large)
        pred = Predictor()
        print("per-atom time, read + predict (predict alone in brackets):")
        per = {}
        for label, path in (("3CI2, 64 residues", small), ("1H68 x 4.6, 1000 residues", large)):
            ens = read_models([path])[0]
            n = ens.n_models * ens.n_atoms
            t_read = best_of(lambda: read_models([path]), a.repeat)
            t_pred = best_of(lambda: pred.predict(ens), a.repeat)
            per[label] = (t_read + t_pred) / n
            print(f"  {label:<28} {ens.n_residues:5d} res {ens.n_models:3d} models {ens.n_atoms:6d} atoms: "
                  f"{(t_read + t_pred) / n * 1e6:6.2f} us/atom ({t_pred / n * 1e6:5.2f} us/atom)")
        v = list(per.values())
        print(f"  ratio 1000 / 60 residues: {v[1] / v[0]:.2f} (target <= 1.3)")
        # like for like: the same protein prepared the same way, only the length differs
        per2 = []
        for n_res in (64, 1000):
            path = tmp / f"ci2_{n_res}.pdb"
            build_long_chain(small, path, n_res=n_res)
            ens = read_models([path])[0]
            n = ens.n_models * ens.n_atoms
            t_read = best_of(lambda: read_models([path]), a.repeat)
            t_pred = best_of(lambda: pred.predict(ens), a.repeat)
            per2.append((t_read + t_pred) / n)
            print(f"  3CI2 model 1 chained, {n_res:4d} res {ens.n_models:3d} models {ens.n_atoms:6d} atoms: "
                  f"{per2[-1] * 1e6:6.2f} us/atom ({t_pred / n * 1e6:5.2f} us/atom)")
        print(f"  ratio 1000 / 64 residues, same protein and preparation: {per2[1] / per2[0]:.2f}")

        if a.files:
            files_vs_one(tmp, pdb, shifts, a.files)

    t_help = best_of(lambda: subprocess.run([sys.executable, "-m", "shiftcheck", "--help"], env=env,
                                            check=True, capture_output=True), max(a.repeat, 5))
    t_py = best_of(lambda: subprocess.run([sys.executable, "-c", "pass"], check=True), max(a.repeat, 5))
    print(f"shiftcheck --help: {t_help:.3f} s (bare python start-up {t_py:.3f} s; target <= 0.3 s)")
    print("load average (1, 5, 15 min) at end: " + " ".join(f"{x:.2f}" for x in os.getloadavg()))
    return 0


if __name__ == "__main__":
    sys.exit(main())
