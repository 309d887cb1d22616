"""Which columns of a table hold structures, and how to read them (recorded in model files)."""

from __future__ import annotations

from dataclasses import dataclass, field

MODES = ("substituents", "core", "molecule", "reaction", "template", "none")


@dataclass(frozen=True)
class InputSpec:
    """How a row's structure is given.

    - ``substituents``: ``columns`` are the substituent columns (positions are their names);
    - ``core``: ``columns`` = (molecule column,), ``core`` the core SMILES; positions R1, R2...;
    - ``molecule``: ``columns`` = (molecule column,); the position is the column's name;
    - ``reaction``: ``columns`` = (reaction SMILES column,); positions: the varying ones of
      reactant1..3, product1..3 (see :mod:`.layout`, found from the family when fitted);
    - ``template``: ``columns`` are substituent columns, ``template`` the reaction template;
    - ``none``: no structures (a curve-only model; energies come from the table).
    """

    mode: str
    columns: tuple[str, ...] = ()
    core: str | None = None
    template: str | None = None
    positions: tuple[str, ...] = field(default=())
    multiplicity: str | None = None   # reaction mode: column of spin multiplicities ("1.2>>2.1")
    #: reaction mode: the family's layout (species order, constant partners); None until fitted
    layout: object = None
    #: molecule mode: SMARTS of the reaction centre (the centre tier; first match per molecule)
    centre: str | None = None

    def __post_init__(self):
        if self.mode not in MODES:
            raise ValueError(f"unknown input mode {self.mode!r}; valid choices: {', '.join(MODES)}")
        if self.centre is not None:
            from rdkit import Chem

            if self.mode != "molecule":
                raise ValueError("--centre goes with molecule input (reactions find their centre themselves; "
                                 "core and substituent input use each group's attachment atom)")
            if Chem.MolFromSmarts(self.centre) is None:
                raise ValueError(f"--centre {self.centre!r} is not a valid SMARTS pattern")

    def as_dict(self) -> dict:
        return {"mode": self.mode, "columns": list(self.columns), "core": self.core,
                "template": self.template, "positions": list(self.positions), "multiplicity": self.multiplicity,
                "layout": None if self.layout is None else self.layout.as_dict(), "centre": self.centre}

    @classmethod
    def from_dict(cls, d: dict) -> "InputSpec":
        layout = None
        if d.get("layout"):
            from .layout import ReactionLayout

            layout = ReactionLayout.from_dict(d["layout"])
        return cls(mode=d["mode"], columns=tuple(d.get("columns") or ()), core=d.get("core"),
                   template=d.get("template"), positions=tuple(d.get("positions") or ()),
                   multiplicity=d.get("multiplicity"), layout=layout, centre=d.get("centre"))


def make_spec(substituents: str | None = None, molecule: str | None = None, core: str | None = None,
              reaction: str | None = None, *, template: str | None = None,
              multiplicity: str | None = None, centre: str | None = None) -> InputSpec:
    """The spec from command-line options; the error says which combinations are allowed."""
    if centre and not (molecule and not core):
        raise ValueError("--centre goes with molecule input (reactions find their centre themselves; core and "
                         "substituent input use each group's attachment atom)")
    subs = tuple(c.strip() for c in substituents.split(",") if c.strip()) if substituents else ()
    given = [n for n, v in (("substituents", subs), ("molecule", molecule), ("reaction", reaction)) if v]
    if template and not subs:
        raise ValueError("a template needs substituents (the columns whose groups fill its attachment points)")
    if template:
        if molecule or reaction:
            raise ValueError("a template goes with substituents only")
        from .reaction import ReactionTemplate

        t = ReactionTemplate(template)
        if max(t.numbers) > len(subs):
            raise ValueError(f"the template uses [*:{max(t.numbers)}] but substituents names {len(subs)} column(s)")
        return InputSpec("template", subs, template=template, positions=subs)
    if len(given) > 1:
        raise ValueError(f"give one structure input, not {' and '.join(given)}")
    if core and not molecule:
        raise ValueError("a core needs molecule (the column of whole molecules to cut at the core)")
    if subs:
        if len(set(subs)) != len(subs):
            raise ValueError("substituents names a column twice")
        return InputSpec("substituents", subs, positions=subs)
    if molecule and core:
        from .core import CoreDecomposer

        return InputSpec("core", (molecule,), core=core, positions=tuple(CoreDecomposer(core).positions))
    if molecule:
        return InputSpec("molecule", (molecule,), positions=(molecule,), centre=centre or None)
    if multiplicity and not reaction:
        raise ValueError("multiplicity goes with reaction")
    if reaction:
        return InputSpec("reaction", (reaction,), multiplicity=multiplicity)
    return InputSpec("none")
