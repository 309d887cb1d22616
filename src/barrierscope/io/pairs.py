"""Turning a user's table into training pairs, or refusing with the rows that are wrong.

Rules (the same for every command that fits):

- energies and barriers must be finite numbers; a bad cell stops the fit with a list of
  the rows and what is wrong, unless the user asks to skip bad rows, in which case each
  skipped row is reported;
- duplicate members (same structure, or same id where there is no structure) with the
  same values are merged with a warning; with different values (a repeated calculation:
  another transition-state conformer, say) they follow ``duplicates``: ``refuse`` (an error
  that lists them, tells a repeated structure from stereochemistry the SMILES leave open, and
  names the options), ``lowest`` (the row with the lowest barrier), ``mean``, or ``boltzmann``
  (the Curtin–Hammett effective values −RT ln Σ exp(−Gᵢ/RT) at the given temperature);
- values implausible for the stated unit (a likely hartree or kJ/mol mix-up) get a warning.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from ..errors import FitRefused, DataError, describe_row
from ..units import to_kcal, unit_mixup_hint
from .tables import READ_ERROR, ROW, decimal_comma_summary, id_column_of, parse_numeric, require_columns, row_ids

#: Two values this close (kcal/mol) count as the same when merging duplicates.
DUPLICATE_TOLERANCE = 1e-6
#: What to do with rows that repeat a structure with other numbers (``--duplicates``).
DUPLICATE_POLICIES = ("refuse", "lowest", "mean", "boltzmann")


def merge_repeats(energy: np.ndarray, barrier: np.ndarray, policy: str, temperature: float = 298.15):
    """One (reaction energy, barrier) from repeated calculations of one member, kcal/mol.

    ``lowest``: the row with the lowest barrier, its own reaction energy; ``mean``: both
    averaged; ``boltzmann``: the Curtin–Hammett effective barrier −RT ln Σᵢ exp(−ΔG‡ᵢ/RT) over
    the transition-state conformers (J. I. Seeman, Chem. Rev. 1983, 83, 83), the reaction
    energies likewise over the product conformers, at ``temperature`` (K)."""
    from scipy.special import logsumexp

    from ..kinetics import R_KCAL

    e, b = np.asarray(energy, dtype=float), np.asarray(barrier, dtype=float)
    if policy == "lowest":
        i = int(np.argmin(b))
        return float(e[i]), float(b[i])
    if policy == "mean":
        return float(e.mean()), float(b.mean())
    if policy == "boltzmann":
        rt = R_KCAL * float(temperature)
        return float(-rt * logsumexp(-e / rt)), float(-rt * logsumexp(-b / rt))
    raise ValueError(f"unknown duplicates policy {policy!r}; valid choices: {', '.join(DUPLICATE_POLICIES)}")


def unassigned_stereo(key: str) -> int:
    """Stereocentres and stereo double bonds a structure key leaves unassigned (0 when unknown)."""
    import re

    from rdkit import Chem, RDLogger

    count = 0
    for part in re.split(r"\||>>|>|\.", str(key)):
        if not part or "*" in part and not any(ch.isalpha() for ch in part.replace("*", "")):
            continue
        RDLogger.DisableLog("rdApp.*")
        try:
            mol = Chem.MolFromSmiles(part)
        finally:
            RDLogger.EnableLog("rdApp.*")
        if mol is None:
            continue
        for info in Chem.FindPotentialStereo(mol):
            if info.specified == Chem.StereoSpecified.Unspecified:
                count += 1
    return count


@dataclass
class RowProblem:
    row: int
    ident: str
    message: str

    def __str__(self) -> str:
        return f"{describe_row(self.row, self.ident)}: {self.message}"


@dataclass
class Pairs:
    """Validated (reaction energy, barrier) pairs in kcal/mol, with where each came from."""

    ids: list[str]
    rows: np.ndarray
    energy: np.ndarray
    barrier: np.ndarray
    keep: np.ndarray                       # mask over the input rows that became members
    warnings: list[str] = field(default_factory=list)
    keys: list[str] | None = None          # the members' identity keys (structures, else ids)
    skipped: list[RowProblem] = field(default_factory=list)
    families: list[str] | None = None      # each member's family (several families at once)
    #: how many input rows each member stands for (--duplicates other than refuse); None: one each
    stands_for: list[int] | None = None

    @property
    def n(self) -> int:
        return int(self.energy.size)


def format_problems(problems: list[RowProblem], limit: int = 20) -> str:
    lines = [str(p) for p in problems[:limit]]
    if len(problems) > limit:
        lines.append(f"... and {len(problems) - limit} more")
    return "\n  ".join(lines)


def numeric_columns(df: pd.DataFrame, columns: dict[str, str], ids: pd.Series, unit: str) -> tuple[dict[str, np.ndarray], list[RowProblem]]:
    """Parse each named column (role → column name) to kcal/mol; collect per-row problems."""
    out: dict[str, np.ndarray] = {}
    problems: list[RowProblem] = []
    rows = df[ROW].to_numpy()
    for role, col in columns.items():
        values, bad = parse_numeric(df[col].reset_index(drop=True), col)
        out[role] = to_kcal(values, unit)
        problems += [RowProblem(int(rows[pos]), ids.iloc[pos], msg) for pos, msg in bad]
    problems.sort(key=lambda p: p.row)
    return out, problems


def resolve_duplicates(keys: pd.Series, values: np.ndarray, ids: pd.Series, rows: np.ndarray,
                       *, by_structure: bool, policy: str = "refuse", temperature: float = 298.15,
                       merged: dict | None = None) -> tuple[np.ndarray, list[str], list[RowProblem]]:
    """(mask keeping the first of each group of equal ``keys``, warnings, conflicts).

    ``values`` is (n, 2): reaction energy, barrier. Duplicates with equal values are merged
    with a warning. A group whose values differ is, with ``policy`` "refuse", a conflict: every
    row of it gets a problem that names the others, says why they collide and how to tell them
    apart; with another policy the group becomes one member (its first row, ``values``
    overwritten by :func:`merge_repeats`), and ``merged`` (position of the kept row → how many
    rows it stands for) records it. ``by_structure``: the keys are structures (else ids).
    """
    keep = np.ones(len(keys), dtype=bool)
    warnings: list[str] = []
    conflicts: list[RowProblem] = []
    dup = keys.duplicated(keep=False).to_numpy()
    if not dup.any():
        return keep, warnings, conflicts
    merged_groups = []
    groups = pd.Series(np.flatnonzero(dup)).groupby(keys.to_numpy()[dup], sort=False)
    for key, positions in groups:
        pos = positions.to_numpy()
        block = values[pos]
        where = ", ".join(describe_row(int(rows[p]), ids.iloc[p]) for p in pos)
        if np.all(np.abs(block - block[0]) <= DUPLICATE_TOLERANCE):
            keep[pos[1:]] = False
            warnings.append(f"member {key!r} appears {len(pos)} times with the same values ({where}); kept once")
            continue
        if policy != "refuse":
            values[pos[0]] = merge_repeats(block[:, 0], block[:, 1], policy, temperature)
            keep[pos[1:]] = False
            merged_groups.append((key, len(pos), where))
            if merged is not None:
                merged[int(pos[0])] = len(pos)
            continue
        distinct_ids = len({ids.iloc[p] for p in pos}) == len(pos)
        open_stereo = unassigned_stereo(key) if by_structure else 0
        for p in pos:
            others = ", ".join(describe_row(int(rows[q]), ids.iloc[q]) for q in pos if q != p)
            values_text = ", ".join(f"{v:.6g}" for v in values[p])
            if by_structure and open_stereo:
                why = (f"same structure as read ({key}) as {others}, with other energies ({values_text} here); the "
                       f"SMILES leave {open_stereo} stereo element(s) unassigned: stereoisomers written alike, or a "
                       f"repeated calculation")
            elif by_structure and distinct_ids:
                why = (f"the same structure, stereochemistry included ({key}), as {others}, with other energies "
                       f"({values_text} here): a repeated calculation (another conformer of the transition state?)")
            elif by_structure:
                why = f"the same member as {others}, with other energies ({values_text} here)"
            else:
                why = f"the same id as {others}, with other energies ({values_text} here)"
            conflicts.append(RowProblem(int(rows[p]), ids.iloc[p], why))
        keep[pos] = False
    if merged_groups:
        shown = "; ".join(f"{key!r} from {k} rows ({where})" for key, k, where in merged_groups[:5])
        more = f"; and {len(merged_groups) - 5} more" if len(merged_groups) > 5 else ""
        warnings.append(f"{len(merged_groups)} member(s) stand for repeated calculations, merged by --duplicates "
                        f"{policy}" + (f" at {temperature:g} K" if policy == "boltzmann" else "") + f": {shown}{more}")
    return keep, warnings, conflicts


def collision_advice(by_structure: bool, conflicts: list[RowProblem]) -> str:
    """What to do about colliding rows (once, after the list)."""
    if not by_structure:
        return ("give each member its own id; where the rows repeat one member's calculation (conformers), "
                "--duplicates lowest, mean or boltzmann makes one member of them; or drop the wrong rows")
    options = ("--duplicates lowest (the lowest barrier), mean, or boltzmann (the Curtin–Hammett effective "
               "barrier at --temperature) makes one member of each repeated structure")
    if any("unassigned" in c.message for c in conflicts):
        return ("Where the rows are stereoisomers, write their stereochemistry (@/@@, / and \\) so they become "
                f"members of their own; where they repeat one reaction (conformers), {options}; or leave them out "
                f"with --skip-bad-rows (each will be listed).")
    if any("repeated calculation" in c.message for c in conflicts):
        return (f"These rows repeat a structure with other numbers: {options}; or leave them out with "
                f"--skip-bad-rows (each will be listed).")
    return (f"keep the right values once, or {options}, or leave these rows out with --skip-bad-rows (each will be "
            f"listed)")


def load_pairs(df: pd.DataFrame, source: str, energy_col: str, barrier_col: str, *, unit: str = "kcal/mol",
               id_col: str | None = None, skip_bad_rows: bool = False, keys: pd.Series | None = None,
               extra_bad: list[RowProblem] | None = None, duplicates: str = "refuse",
               temperature: float = 298.15) -> Pairs:
    """Validated pairs from ``df``.

    ``keys`` identify members for duplicate detection (canonical structures, say); by
    default the id column is used when there is one. ``extra_bad`` are problems found by
    the caller (unparseable structures, say) that also exclude rows.
    """
    require_columns(df, [energy_col, barrier_col], source)
    ids = row_ids(df, id_col, source)
    values, problems = numeric_columns(df, {"energy": energy_col, "barrier": barrier_col}, ids, unit)
    if READ_ERROR in df.columns:  # the reader found these rows unusable (unless the caller did too)
        rows = df[ROW].to_numpy()
        known = {p.row for p in (extra_bad or [])}
        problems += [RowProblem(int(rows[i]), ids.iloc[i], str(m))
                     for i, m in enumerate(df[READ_ERROR].astype(str)) if m and int(rows[i]) not in known]
    problems = sorted(problems + list(extra_bad or []), key=lambda p: p.row)
    rows = df[ROW].to_numpy()
    bad_rows = {p.row for p in problems}
    ok = np.array([r not in bad_rows for r in rows], dtype=bool)
    comma = decimal_comma_summary(problems)
    if comma and (not skip_bad_rows or not ok.any()):
        raise DataError(f"{source}: {comma}. First rows:\n  {format_problems(problems, limit=5)}")
    if problems and not skip_bad_rows:
        raise DataError(f"{source}: {len(bad_rows)} row(s) cannot be used:\n  {format_problems(problems)}\n"
                         f"fix them, or pass --skip-bad-rows to leave them out (each will be listed)")
    warnings: list[str] = []
    if problems:
        warnings.append(f"{len(bad_rows)} row(s) left out because of bad values (each listed with its reason)")
    by_structure = keys is not None
    if keys is None and (id_col or id_column_of(df.columns) is not None):
        keys = ids
    stands_for = None
    if keys is not None:
        keys = pd.Series(np.asarray(keys, dtype=object)).reset_index(drop=True)
        sub = np.flatnonzero(ok)
        both = np.column_stack([values["energy"], values["barrier"]])
        if duplicates not in DUPLICATE_POLICIES:
            raise ValueError(f"unknown duplicates policy {duplicates!r}; valid choices: {', '.join(DUPLICATE_POLICIES)}")
        block, merged = both[sub], {}
        keep_sub, dup_warn, conflicts = resolve_duplicates(keys.iloc[sub].reset_index(drop=True), block,
                                                           ids.iloc[sub].reset_index(drop=True), rows[sub],
                                                           by_structure=by_structure, policy=duplicates,
                                                           temperature=temperature, merged=merged)
        values["energy"][sub], values["barrier"][sub] = block[:, 0], block[:, 1]
        stands_for = np.ones(len(df), dtype=int)
        for pos, k in merged.items():
            stands_for[sub[pos]] = k
        warnings += dup_warn
        ok[sub[~keep_sub]] = False
        if conflicts and not skip_bad_rows:
            raise DataError(f"{source}: {len(conflicts)} rows collide with another row of other energies:\n  "
                             f"{format_problems(conflicts)}\n{collision_advice(by_structure, conflicts)}")
        if conflicts:
            warnings.append(f"{len(conflicts)} row(s) left out because they collide with another row of different "
                            f"energies (each listed with its reason)")
            problems = sorted(problems + conflicts, key=lambda p: p.row)
    hint = unit_mixup_hint(values["barrier"][ok], unit, values["energy"][ok])
    if hint:
        warnings.append(hint)
    counts = stands_for
    return Pairs(ids=[ids.iloc[i] for i in np.flatnonzero(ok)], rows=rows[ok], energy=values["energy"][ok],
                 barrier=values["barrier"][ok], keep=ok, warnings=warnings, skipped=list(problems),
                 stands_for=None if counts is None or (counts == 1).all() else counts[ok].tolist(),
                 keys=None if keys is None else [str(keys.iloc[i]) for i in np.flatnonzero(ok)])


def require_members(n: int, needed: int, what: str) -> None:
    if n < needed:
        raise FitRefused(f"{n} usable member(s); {what} needs at least {needed}")
