"""GFN2-xTB reaction energies against the published DFT reaction free energies.

Data: T. Stuyver, K. Jorner, C. W. Coley, Sci. Data 2023, 10, 66 (MIT licence; PBE0-D3(BJ)
free energies in implicit water), read from ../shared/datasets. One class: C–N–N dipoles
with C=C partners; 48 reactions drawn with a fixed seed. Target (issue 9): r ≥ 0.8
(measured before the project: about 0.87 on 160 reactions of the class).
"""

import numpy as np
import pytest

pytest.importorskip("tblite", reason="GFN2-xTB reaction energies need tblite (extra 'xtb')")


@pytest.mark.xtb
@pytest.mark.slow
def test_xtb_reaction_energy_tracks_dft(cycloaddition, tmp_path):
    from barrierscope.descriptors.cache import DescriptorCache
    from barrierscope.descriptors.featurize import REACTION_ENERGY_XTB, featurize
    from barrierscope.descriptors.tiers import DescriptorEngine
    from barrierscope.jobs.executors import ProcessExecutor
    from barrierscope.semiempirical.species import XtbSettings
    from barrierscope.structures.spec import make_spec

    sub = cycloaddition[cycloaddition["family"] == "C-N-N/C=C"].sample(48, random_state=0).reset_index(drop=True)
    executor = ProcessExecutor(2)
    try:
        engine = DescriptorEngine(("xtb",), DescriptorCache(tmp_path), executor=executor,
                                  xtb_settings=XtbSettings(level="sp", solvent="water"))
        block = featurize(sub, make_spec(reaction="rxn_smiles"), engine)
    finally:
        executor.close()
    ok = block.status == "ok"
    assert ok.sum() >= 40, list(block.status[~ok])
    x = block.X.loc[ok, REACTION_ENERGY_XTB].to_numpy()
    r = np.corrcoef(x, sub.loc[ok, "G_r"].to_numpy())[0, 1]
    print(f"\nr = {r:.3f} over {ok.sum()} reactions; {engine.computed} species computed, "
          f"{len(sub['dipolarophile'].unique())} distinct partners")
    assert r >= 0.8
