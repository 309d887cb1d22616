"""Several families at once (issue 17): the joint fit recovers a shared width with narrower
intervals than separate fits, the sharing test rejects what is not shared, the Jacobian is
exact, and `curve --family` keeps its JSON contract. All families here are INVENTED test data
on the asymptotic curve (METHOD §2), labelled so."""

import json

import numpy as np
import pandas as pd
import pytest

from barrierscope.errors import InputError
from typer.testing import CliRunner

from barrierscope.cli import app
from barrierscope.curves.joint import JointLayout, fit_joint, residuals_and_jacobian, separate_fits
from barrierscope.jobs.families import joint_record, parse_share
from barrierscope.relations import get_relation

ASYM = get_relation("asymptotic")
#: name → (floor, midpoint, energy range): four families sharing a width of 4 kcal/mol; "d"
#: spans only 8 kcal/mol around its midpoint's uphill side, too little to pin a width alone.
SPEC = {"a": (4.0, -8.0, (-30.0, 10.0)), "b": (6.0, -4.0, (-25.0, 12.0)), "c": (3.0, -10.0, (-28.0, 5.0)),
        "d": (5.0, -6.0, (-4.0, 4.0))}


def invented(seed=0, n=15, widths=None, noise=0.7):
    rng = np.random.default_rng(seed)
    x, y, lab = [], [], []
    for name, (f, m, (lo, hi)) in SPEC.items():
        w = 4.0 if widths is None else widths[name]
        e = rng.uniform(lo, hi, n)
        x += e.tolist()
        y += (ASYM.barrier(e, np.array([f, m, w])) + rng.normal(0, noise, n)).tolist()
        lab += [name] * n
    return np.array(x), np.array(y), lab


def test_layout_packs_shared_parameters_once():
    lay = JointLayout(("floor", "midpoint", "width"), ("width",), 3)
    assert lay.size == 1 + 3 * 2
    theta = np.array([[1.0, 2.0, 4.0], [3.0, 4.0, 5.0], [5.0, 6.0, 6.0]])
    back = lay.unpack(lay.pack(theta))
    assert np.allclose(back[:, :2], theta[:, :2]) and np.allclose(back[:, 2], 5.0)   # the median width


def test_joint_jacobian_matches_finite_differences():
    x, y, lab = invented(1)
    fam = np.array(["abcd".index(v) for v in lab])
    lay = JointLayout(("floor", "midpoint", "width"), ("width",), 4)
    u = lay.pack(np.array([[4, -8, 4], [6, -4, 4.5], [3, -10, 3.5], [5, -6, 4.2]], dtype=float))
    r, jac = residuals_and_jacobian(ASYM, lay, x, y, fam=fam, u=u)
    for i in range(lay.size):
        h = 1e-6 * (1 + abs(u[i]))
        up, dn = u.copy(), u.copy()
        up[i] += h
        dn[i] -= h
        num = (residuals_and_jacobian(ASYM, lay, x, y, fam=fam, u=up)[0] -
               residuals_and_jacobian(ASYM, lay, x, y, fam=fam, u=dn)[0]) / (2 * h)
        assert np.allclose(jac[:, i], num, atol=1e-6), i


def test_shared_width_is_recovered_with_narrower_intervals():
    covered = narrower = 0
    for seed in range(8):
        x, y, lab = invented(seed)
        record, *_ = joint_record(x, y, lab, validate=False)
        fams = record.as_dict()["families"]
        lo, hi = fams["a"]["ci95"]["width"]
        covered += lo < 4.0 < hi                              # the true shared width
        alone = []
        for name, f in fams.items():
            assert f["ci95"]["width"] == [lo, hi]             # one interval for the shared parameter
            s_lo, s_hi = f["separate"]["ci95"]["width"]
            alone.append(s_hi - s_lo)
            narrower += hi - lo < s_hi - s_lo
        assert hi - lo < np.median(alone), seed               # narrower than a typical family alone
        # The narrow family cannot pin its width alone; jointly its midpoint is back near the truth.
        assert fams["d"]["separate"]["ci95_open"]["width"][1] or fams["d"]["separate"]["at_bound"]
        assert abs(fams["d"]["params"]["midpoint"] - (-6.0)) < 3.0
    # 95 % intervals over 8 invented families: 7.6 covered expected; 5 or fewer has probability 0.6 %.
    assert covered >= 6, covered
    assert narrower >= 28, narrower                           # of 32 (family, seed) pairs


def test_the_sharing_test_rejects_widths_that_differ():
    widths = {"a": 1.5, "b": 9.0, "c": 1.5, "d": 9.0}
    rng_spec = dict(SPEC)
    SPEC["d"] = (5.0, -6.0, (-30.0, 15.0))                    # a wide span: every width is pinned
    try:
        x, y, lab = invented(4, n=25, widths=widths, noise=0.5)
        record, *_ = joint_record(x, y, lab, validate=False)
    finally:
        SPEC.update(rng_spec)
    t = record.sharing_test
    assert t.p < 1e-3 and t.aicc_separate < t.aicc_shared


def test_validation_by_member_and_by_family():
    x, y, lab = invented(0)
    record, *_ = joint_record(x, y, lab)
    loo = record.validation["loo"]
    assert loo.n_test == 60 and loo.routes["joint"].mae < loo.routes["family_mean"].mae
    assert loo.routes["joint"].mae <= loo.routes["separate"].mae * 1.05
    lofo = record.validation["leave_family_out"]
    assert "family_mean" in lofo.joint_beats and "not predictable" in lofo.note


def test_share_choices_and_sizes():
    assert parse_share(None) == ("width",) and parse_share("none") == ()
    assert parse_share("width, floor") == ("floor", "width")
    with pytest.raises(InputError, match="--share slope: slope is not a parameter"):
        parse_share("slope")
    x, y, lab = invented(0)
    fam = np.array(["abcd".index(v) for v in lab])
    sel = (fam != 3) | (np.arange(fam.size) % 15 < 2)         # family d with 2 members: too few for F and M
    with pytest.raises(ValueError, match="needs at least 3"):
        fit_joint(ASYM, x[sel], y[sel], fam[sel], n_families=4, shared=("width",), separate=separate_fits(ASYM, x[sel], y[sel], fam[sel], n_families=4))


def test_curve_family_cli_contract(tmp_path):
    x, y, lab = invented(0)
    ids = [f"s{i % 15}" for i in range(60)]                   # the same substrates in every family
    path = tmp_path / "fams.csv"
    pd.DataFrame({"id": ids, "reagent": lab, "dE": x, "dG": y}).to_csv(path, index=False)
    fig = tmp_path / "fams.png"
    r = CliRunner().invoke(app, ["curve", str(path), "--energy", "dE", "--barrier", "dG", "--family", "reagent",
                                 "--json", "--figure", str(fig)])
    assert r.exit_code == 0, r.output
    s = json.loads(r.stdout)
    assert set(s["families"]) == {"a", "b", "c", "d"} and s["shared"] == ["width"]
    for f in s["families"].values():
        assert {"n", "params", "ci95"} <= set(f) and f["n"] == 15
    assert {"p", "aicc_shared", "aicc_separate"} <= set(s["sharing_test"])
    assert fig.read_bytes()[:4] == b"\x89PNG"
    # kJ/mol: energies scale, the test's p does not.
    pd.DataFrame({"id": ids, "reagent": lab, "dE": x * 4.184, "dG": y * 4.184}).to_csv(path, index=False)
    r2 = CliRunner().invoke(app, ["curve", str(path), "--energy", "dE", "--barrier", "dG", "--family", "reagent",
                                  "--json", "--units", "kJ/mol"])
    s2 = json.loads(r2.stdout)
    assert s2["families"]["a"]["params"]["floor"] == pytest.approx(4.184 * s["families"]["a"]["params"]["floor"],
                                                                  rel=1e-4)
    assert s2["sharing_test"]["p"] == pytest.approx(s["sharing_test"]["p"], rel=1e-3)


def test_rows_without_a_family_are_named(tmp_path):
    x, y, lab = invented(0)
    lab[7] = ""
    path = tmp_path / "fams.csv"
    pd.DataFrame({"reagent": lab, "dE": x, "dG": y}).to_csv(path, index=False)
    r = CliRunner().invoke(app, ["curve", str(path), "--energy", "dE", "--barrier", "dG", "--family", "reagent"])
    assert r.exit_code != 0 and "row 8" in r.output and "no family" in r.output


@pytest.fixture(scope="module")
def family_model(tmp_path_factory):
    from families import multi_family

    folder = tmp_path_factory.mktemp("multi")
    df = multi_family(22, seed=0, path=folder / "multi.csv")
    model = folder / "model.json"
    r = CliRunner().invoke(app, ["fit", str(folder / "multi.csv"), "--substituents", "R1,R2", "--energy", "dE",
                                 "--barrier", "dG", "--family", "reagent", "-o", str(model), "--json",
                                 "--shuffles", "0", "--cache-dir", str(folder / "cache")])
    assert r.exit_code == 0, r.output
    return folder, df, model, json.loads(r.stdout)


def test_fit_family_contract_and_the_joint_curves_pay(family_model):
    from families import REAGENTS

    _, _, _, s = family_model
    assert set(s["families"]) == set(REAGENTS) and s["shared"] == ["width"]
    assert {"p", "aicc_shared", "aicc_separate"} <= set(s["sharing_test"])
    for name, f in s["families"].items():
        assert f["n"] == 22 and set(f["ci95"]) == {"floor", "midpoint", "width"}
        floor = REAGENTS[name][1]
        assert f["ci95"]["floor"][0] - 1.0 < floor < f["ci95"]["floor"][1] + 1.0
    loo = s["family_validation"]["loo"]["routes"]
    # Each reagent's own curve beats one curve for all three (invented families with distinct floors).
    assert loo["two_stage"]["mae"] < s["validation"]["loo"]["routes"]["two_stage"]["mae"]
    assert s["primary_route"] in ("two_stage", "direct")
    assert any(c.startswith("family=") for c in s["features"])      # family offsets in the energy stage


def test_screen_and_suggest_with_a_family_column(family_model, tmp_path):
    folder, df, model, _ = family_model
    lib = df[["id", "R1", "R2", "reagent"]].head(30).copy()
    lib.loc[0, "reagent"] = "reagent Z"
    lib.to_csv(tmp_path / "lib.csv", index=False)
    out = tmp_path / "out.csv"
    r = CliRunner().invoke(app, ["screen", str(model), str(tmp_path / "lib.csv"), "-o", str(out), "--cache-dir",
                                 str(folder / "cache")])
    assert r.exit_code == 0, r.output
    res = pd.read_csv(out, keep_default_na=False)
    assert len(res) == 30 and res.loc[0, "error_kind"] == "unknown_family" and "reagent Z" in res.loc[0, "status"]
    ok = res[res["status"] == "ok"].merge(df, on=["id", "reagent"])
    assert np.mean(np.abs(ok["barrier_kcal_mol"].astype(float) - ok["dG"])) < 1.5   # training members, own curves
    # The summary names the families' floors exactly when some row's interval reaches its family's floor.
    from barrierscope.io.modelfile import load_model

    fitted = load_model(model)
    floors = dict(zip(fitted.joint["names"], fitted.family_floors()))
    reach = (ok["barrier_low90_kcal_mol"].astype(float) <= ok["reagent"].map(floors) + 1e-6).any()
    assert ("their family's floor" in r.output) == bool(reach)
    # Members already computed with their reagent are left out; new substrates are considered.
    from families import substituent_family

    done = df[df["reagent"] == "reagent A"][["id", "R1", "R2", "reagent"]].head(5)
    fresh = substituent_family(12, seed=9)[["R1", "R2"]].tail(5).assign(id=[f"n{i}" for i in range(5)],
                                                                        reagent="reagent B")
    pd.concat([done, fresh]).to_csv(tmp_path / "cands.csv", index=False)
    r = CliRunner().invoke(app, ["suggest", str(model), str(tmp_path / "cands.csv"), "-k", "2", "--json",
                                 "--cache-dir", str(folder / "cache")])
    assert r.exit_code == 0, r.output
    s = json.loads(r.stdout)
    assert s["already_computed"] == 5 and s["considered"] == 5
    assert {p["id"] for p in s["picks"]} <= {f"n{i}" for i in range(5)}


def test_a_joint_fit_keeps_its_bounds_through_a_model_file():
    # Profile intervals search within the fit's bounds: a reloaded joint fit must still have them.
    import json

    from barrierscope.curves.joint import JointFit
    from barrierscope.curves.joint_intervals import joint_profile_intervals
    from barrierscope.jobs.families import family_codes

    x, y, lab = invented(2)
    _, fit, fam, _ = joint_record(x, y, lab, validate=False)
    again = JointFit.from_dict(json.loads(json.dumps(fit.as_dict())))
    assert all(np.array_equal(a, b) for a, b in zip(fit.bounds, again.bounds)) and len(again.bounds) == 2
    first, second = (joint_profile_intervals(f, x, y, family_codes(lab)[0]) for f in (fit, again))
    assert all(first[i].low == pytest.approx(second[i].low) and first[i].high == pytest.approx(second[i].high)
               for i in first)


def test_batched_joint_refits_equal_one_at_a_time_refits():
    # The block-structured solver (many joint problems at once, steps by the Schur complement of the
    # family blocks) must land where scipy's least_squares lands refitting one problem at a time.
    from barrierscope.curves.joint import fit_joint
    from barrierscope.curves.joint_batch import joint_lm

    x, y, lab = invented(3)
    _, fit, fam, _ = joint_record(x, y, lab, validate=False)
    lo, hi = fit.bounds
    drop = [0, 11, 25, 40, 57]
    w = np.ones((len(drop), x.size))
    w[np.arange(len(drop)), drop] = 0.0
    U, cost, converged = joint_lm(fit.relation, fit.layout, x, y, fam, weights=w, u0=fit.u, lo=lo, hi=hi)
    assert converged.all()
    for r, i in enumerate(drop):
        keep = np.arange(x.size) != i
        ref = fit_joint(fit.relation, x[keep], y[keep], fam[keep], n_families=fit.layout.n_families,
                        shared=fit.layout.shared, start=fit.u)
        assert cost[r] == pytest.approx(ref.rss, rel=1e-7)
        assert np.allclose(U[r], ref.u, atol=1e-4)
