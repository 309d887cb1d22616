"""The `curve` job: compare every relation on one family's pairs (energies in kcal/mol).

:func:`compare_curves` fits every relation of the default comparison to the same pairs and
scores them (exact leave-one-out, AICc, BIC); the asymptotic curve also gets parameter
intervals, their correlations, the reverse-direction curve, α at every member and the
identifiability verdict. The views put it into the user's unit and words.
"""

from __future__ import annotations

import contextlib

import numpy as np

from ..curves.compare import BEST_BY, compare_relations
from ..curves.fit import FitError, loss_name
from ..curves.records import AsymptoticSummary, CurveComparison, RelationEntry, SkippedRow
from ..curves.regressor import CurveRegressor
from ..records import replace
from .records import JointRecord
from ..errors import DataError, FitRefused
from .options import at_least, one_of, option
from ..relations import RELATIONS


def _entry(name: str, score) -> RelationEntry:
    rel = RELATIONS[name]()
    if score.fit is None:
        return RelationEntry(label=rel.label, skipped=score.skipped)
    return RelationEntry(label=rel.label, params=score.fit.params_dict(), derived=rel.derived(score.fit.params),
                         loo_mae=score.loo_mae, loo_rmse=score.loo_rmse, rmse=score.rmse, mae=score.mae,
                         aicc=score.aicc, bic=score.bic, n_outside_validity=score.n_outside_validity,
                         at_bound=list(score.fit.at_bound))


def compare_curves(energy, barrier, energy_kind: str = "free-energy", loss: str = "squared", *,
                   intervals: str = "profile", n_bootstrap: int = 1000, level: float = 0.95,
                   **context) -> CurveComparison:
    """Every relation on the pairs, the asymptotic curve with intervals and its verdict (kcal/mol);
    ``context``: the record's other fields (columns, unit, warnings, skipped rows)."""
    x = np.asarray(energy, dtype=float)
    y = np.asarray(barrier, dtype=float)
    comp = compare_relations(x, y, loss=loss_name(loss))
    entries = {name: _entry(name, score) for name, score in comp.scores.items()}
    summary = None
    if entries.get("asymptotic") is not None and entries["asymptotic"].params is not None:
        curve = CurveRegressor("asymptotic", loss=loss, intervals=intervals, n_bootstrap=n_bootstrap,
                               level=level).fit(x, y)
        ident = curve.identifiability_
        a = replace(entries["asymptotic"], interval_method="wald" if (intervals == "profile" and loss != "squared")
                    else intervals, ci95={k: [lo, hi] for k, (lo, hi) in curve.ci_.items()},
                    ci95_open={k: list(v) for k, v in curve.ci_open_.items()} or None,
                    correlation=curve.correlation_.round(6).tolist(), reverse=curve.reverse_params(),
                    identifiable=None if ident is None else bool(ident.identifiable), identifiability=ident,
                    alpha_members=None if ident is None else curve.slope(x).tolist())
        entries["asymptotic"] = a
        # The asymptotic curve's verdict also at the top level (`asymptotic.ci95`, `asymptotic.identifiable`).
        summary = AsymptoticSummary(params=a.params, ci95=a.ci95, identifiable=a.identifiable, derived=a.derived,
                                    reverse=a.reverse)
    return CurveComparison(n=comp.n, energy_kind=energy_kind, energy_range=[float(np.min(x)), float(np.max(x))],
                           relations=entries, best=comp.best, best_by=BEST_BY, loss=loss, asymptotic=summary,
                           **context)


def curve_options(units: str, kind: str) -> tuple[str, str]:
    """(unit, energy kind) of the `curve` command's options, or the option's message."""
    from ..units import normalize_unit, parse_energy_kind

    with option("--units"):
        unit = normalize_unit(units)
    with option("--kind"):
        energy_kind = parse_energy_kind(kind).value
    return unit, energy_kind


@contextlib.contextmanager
def refused():
    """A fit the data cannot support (FitError: no energy span, too few members) is the
    chemist's to know: FitRefused, exit 2."""
    try:
        yield
    except FitError as exc:
        raise FitRefused(str(exc)) from None


def curve_file(data, energy: str, barrier: str, units: str = "kcal/mol", *, kind: str = "free-energy",
               id_column: str | None = None, loss: str = "squared", intervals: str = "profile",
               n_bootstrap: int = 1000, skip_bad_rows: bool = False, duplicates: str = "refuse",
               temperature: float = 298.15) -> CurveComparison:
    """The comparison record of a table's pairs, with the warnings and skipped rows (kcal/mol);
    ``duplicates``/``temperature``: rows that repeat a member (the same id) with other numbers
    (:data:`..io.pairs.DUPLICATE_POLICIES`)."""
    from ..io.pairs import load_pairs, require_members
    from ..io.tables import read_table

    unit, energy_kind = curve_options(units, kind)
    one_of("--intervals", intervals, ("profile", "wald", "bootstrap"))
    with option("--loss"):
        loss_name(loss)
    at_least("--n-bootstrap", n_bootstrap, 20)
    from ..io.pairs import DUPLICATE_POLICIES

    one_of("--duplicates", duplicates, DUPLICATE_POLICIES)
    pairs = load_pairs(read_table(data), str(data), energy, barrier, unit=unit, id_col=id_column,
                       skip_bad_rows=skip_bad_rows, duplicates=duplicates, temperature=temperature)
    require_members(pairs.n, 4, "comparing the relations with leave-one-out")
    with refused():
        return compare_curves(pairs.energy, pairs.barrier, energy_kind=energy_kind, loss=loss, intervals=intervals,
                              n_bootstrap=n_bootstrap, energy_column=energy, barrier_column=barrier,
                              warnings=pairs.warnings, units=unit,
                              skipped=[SkippedRow(row=p.row, id=p.ident, problem=p.message) for p in pairs.skipped])


def families_file(data, energy: str, barrier: str, family: str, *, share: str | None = None, units: str = "kcal/mol",
                  kind: str = "free-energy", id_column: str | None = None, skip_bad_rows: bool = False,
                  figure=None, duplicates: str = "refuse", temperature: float = 298.15) -> JointRecord:
    """The joint record of every family in a table (kcal/mol); each family's rows are checked
    as one family (the same id may recur in different families: the same substrate with
    another reagent)."""
    from ..io.pairs import load_pairs
    from ..io.tables import read_table
    from .families import family_labels, joint_record, parse_share

    from ..io.pairs import DUPLICATE_POLICIES

    unit, energy_kind = curve_options(units, kind)
    one_of("--duplicates", duplicates, DUPLICATE_POLICIES)
    df = read_table(data)
    labels, problems = family_labels(df, family, str(data))
    if problems and not skip_bad_rows:
        raise DataError(f"{data}: {len(problems)} row(s) have no family:\n  " +
                         "\n  ".join(map(str, problems[:20])) + "\nfill them, or pass --skip-bad-rows")
    x, y, fam_labels, warnings, skipped = [], [], [], [], [str(p) for p in problems]
    for name in sorted(set(labels) - {""}):
        sub = df[(labels == name).to_numpy()]
        pairs = load_pairs(sub, f"{data} (family {name})", energy, barrier, unit=unit, id_col=id_column,
                           skip_bad_rows=skip_bad_rows, duplicates=duplicates, temperature=temperature)
        x += pairs.energy.tolist()
        y += pairs.barrier.tolist()
        fam_labels += [name] * pairs.n
        warnings += [f"family {name}: {w}" for w in pairs.warnings]
        skipped += [f"family {name}: {p}" for p in pairs.skipped]
    with refused():
        record, fit, fam, names = joint_record(np.array(x), np.array(y), fam_labels, share=parse_share(share),
                                               energy_kind=energy_kind, units=unit, family_column=family,
                                               warnings=warnings, skipped=skipped)
    if figure is not None:
        from ..io.atomic import write_bytes_atomic
        from ..views.figures import families_png

        write_bytes_atomic(figure, families_png(record.families, record.relation, record.shared, np.array(x),
                                                barrier=np.array(y), fam=fam, names=names, unit=unit,
                                                kind=energy_kind))
    return record
