"""Write the demo data (INVENTED, see CARD.md): family.csv, library.csv and CARD.md.

    python datasets/demo/make_demo.py

The generator is the library function barrierscope.demo.scenario, so `barrierscope demo`
on an installed package produces exactly these files; tests/test_demo.py checks they agree.
"""

from pathlib import Path

from barrierscope.demo.scenario import card_text, make_family, make_library

if __name__ == "__main__":
    here = Path(__file__).parent
    family = make_family()
    family.to_csv(here / "family.csv", index=False)
    make_library(family).to_csv(here / "library.csv", index=False)
    (here / "CARD.md").write_text(card_text())
    print(f"wrote {here / 'family.csv'}, {here / 'library.csv'} and {here / 'CARD.md'}")
