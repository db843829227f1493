"""The console summary of a scoring run: a few readable lines printed by ``shiftcheck score``."""
from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from ..chem.nuclei import BACKBONE

if TYPE_CHECKING:
    from ..score.scoring import ScoreResult

__all__ = ["console_summary"]


MAX_LISTED = 10      # model files listed one per line


def console_summary(res: ScoreResult, outdir: str | None = None, top: int = 10) -> str:
    """Readable text summary of a ScoreResult."""
    comp, rk = res.comparison, res.ranking
    lines = [f"Shifts: {res.shifts.source} ({len(comp)} atoms on {comp.n_residues} residues compared)"]
    for ens, m in zip(res.ensembles[:MAX_LISTED], res.mappings):
        lines.append(f"  {ens.name}: chain {ens.chain_id or '(blank)'}, {ens.n_models} model(s), identity "
                     f"{m.identity:.2f}, coverage {m.coverage:.2f}")
    if len(res.ensembles) > MAX_LISTED:
        lines.append(f"  ... and {len(res.ensembles) - MAX_LISTED} more model files (summary.json lists all)")
    lines.append("")
    lines.append(f"Referencing offsets (measured - predicted, ppm; --reref {res.parameters['reref']}):")
    for iso, name in (("C", "13C"), ("N", "15N"), ("H", "1H")):
        o = res.offsets[iso]
        if not o.n:
            lines.append(f"  {name:4s} no atoms")
            continue
        extra = ""
        if o.per_atom:
            extra = "  [" + ", ".join(f"{k} {v['value']:+.2f}" for k, v in o.per_atom.items()
                                      if v["value"] is not None) + "]"
        lines.append(f"  {name:4s} {o.value:+.2f} (95% {o.low:+.2f} to {o.high:+.2f}, n={o.n}) "
                     f"{'APPLIED' if o.applied else 'not applied'}{extra}")
    lines.append("")
    lines.append("Ranking (score: robust RMS of residual/expected error; lower is better):")
    head = f"  {'rank':>4} {'model':<24} {'score':>6} {'95% interval':>15} {'p_best':>6}  " + \
        " ".join(f"{x:>5}" for x in BACKBONE)
    lines.append(head)
    for n, i in enumerate(rk.order):
        if n >= 30:
            lines.append(f"  ... {len(rk.order) - 30} more in ranking.csv")
            break
        rms = " ".join(f"{res.metrics[x]['rmsd'][i]:5.2f}" if np.isfinite(res.metrics[x]["rmsd"][i]) else "    -"
                       for x in BACKBONE)
        mark = "*" if rk.best_group[i] else " "
        lines.append(f"  {rk.rank[i]:>4}{mark}{comp.entries[i].name[:24]:<24} {rk.score[i]:6.2f} "
                     f"{rk.low[i]:6.2f} - {rk.high[i]:6.2f} {rk.p_best[i]:6.2f}  {rms}")
    lines.append("  * = cannot be told apart from the best (beats it in >= 5 % of bootstrap replicates)")
    lines += _geometry_lines(res)
    lines.append("")
    every = [(j, k) for j, k in enumerate(res.outliers.klass) if k == "every"]
    best = int(rk.order[0])
    fl = np.flatnonzero(res.outliers.flagged[best])
    lines.append(f"Flags (|residual| > {res.outliers.k:g} x expected error): "
                 f"{len(every)} atoms in every model, "
                 f"{int(np.sum(res.outliers.klass == 'some'))} in some models; "
                 f"{len(fl)} in the best model, largest |z| first"
                 + (" (measured minus the applied offset)" if any(o.applied for o in res.offsets.values()) else ""))
    zb, rb = res.z_rows(best, best + 1)[0], res.residual_rows(best, best + 1)[0]
    order = sorted(fl, key=lambda j: -abs(zb[j]))[:top]
    for j in order:
        meas = comp.predicted[best, j] + rb[j]   # measured - applied offset
        lines.append(f"  {comp.seq_id[j]:>5} {comp.comp_id[j]} {comp.atom_id[j]:<5} "
                     f"measured {meas:8.3f} predicted {comp.predicted[best, j]:8.3f} "
                     f"z {zb[j]:+6.1f}  ({res.outliers.klass[j]})")
    whole = [r for r in res.residue_summary if r.get("residue_flag")]
    if res.residue_rule is not None:
        lines.append(f"Residues disagreeing as a whole (sum over their atoms above the residue limit): "
                     f"{sum(r['residue_flag'] == 'every' for r in whole)} in every model, "
                     f"{sum(r['residue_flag'] == 'some' for r in whole)} in some models")
        for r in sorted(whole, key=lambda r: (r["residue_flag"] != "every", r["seq_id"]))[:top]:
            if r["residue_q_best"] is None:
                continue
            lines.append(f"  {r['seq_id']:>5} {r['comp_id']} {r['n_atoms']} atoms, sum {r['residue_q_best']:.1f} "
                         f"(limit {r['residue_limit_best']:.1f}) in the best model  ({r['residue_flag']})")
    warn = [f for f in res.findings if f.severity == "warning"]
    lines.append("")
    lines.append(f"Data checks: {len(warn)} warnings, {len(res.findings) - len(warn)} notes")
    for f in warn[:top]:
        lines.append(f"  {f.seq_id:>5} {f.comp_id} {f.atom_id}: [{f.rule}] {f.message}")
    if res.warnings:
        lines.append(f"Warnings: {len(res.warnings)} (see summary.json)")
    for name, a in list(comp.absent.items())[:top]:
        lines.append(f"  {name}: lacks {a['n_absent']} of the {len(comp)} compared atoms; scored on its "
                     f"other {a['n_compared']}")
    left = sum(comp.left_out.values())
    if left:
        lines.append(f"Left out of the comparison: {left} shifts (see summary.json left_out)")
    skipped = getattr(res, "skipped", [])
    if skipped:
        lines.append(f"Skipped models: {len(skipped)} (not scored; see summary.json skipped)")
        lines += [f"  {s.file}: {s.reason}" for s in skipped[:top]]
        if len(skipped) > top:
            lines.append(f"  ... {len(skipped) - top} more")
    if outdir:
        lines.append(f"Output: {outdir}")
    return "\n".join(lines)


def _geometry_lines(res: ScoreResult) -> list[str]:
    """Geometry of every model in rank order (clashes, chain breaks, Ramachandran outliers)."""
    from ..structure.quality import result_geometry, summary_lines

    geo = result_geometry(res)
    recs = [geo[res.comparison.entries[i].name] for i in res.ranking.order
            if res.comparison.entries[i].name in geo]
    return ["", "Geometry (heavy atoms; rank order; see docs/outputs.md):"] + summary_lines(recs) if recs else []

