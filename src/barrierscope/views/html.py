"""Small HTML pieces for the self-contained report: escaping, tables, embedded figures.

Every string that came from the user (file and column names, ids, SMILES, messages quoting
them) passes through :func:`esc`; figures are embedded as data URIs, so the report refers
to nothing outside itself.
"""

from __future__ import annotations

import base64
import html
from pathlib import Path

import numpy as np

esc = html.escape


def num(v, digits: int = 3) -> str:
    if v is None or (isinstance(v, float) and not np.isfinite(v)):
        return "—"
    if isinstance(v, (bool, np.bool_)):
        return "yes" if v else "no"
    if isinstance(v, (int, np.integer)):
        return str(int(v))
    return f"{v:.{digits}g}"


def table(head, rows, cls: str = "") -> str:
    """A table; cells are HTML already (escape user text before)."""
    out = [f"<table{' class=' + repr(cls) if cls else ''}><thead><tr>", *[f"<th>{h}</th>" for h in head],
           "</tr></thead><tbody>"]
    out += ["<tr>" + "".join(f"<td>{c}</td>" for c in r) + "</tr>" for r in rows]
    out.append("</tbody></table>")
    return "".join(out)


def figure(png: bytes, caption: str, name: str, figures_dir: Path | None) -> str:
    """An embedded PNG with its caption; also written to ``figures_dir`` when given."""
    if figures_dir is not None:
        from ..io.atomic import write_bytes_atomic

        figures_dir.mkdir(parents=True, exist_ok=True)
        write_bytes_atomic(figures_dir / f"{name}.png", png)
    data = base64.b64encode(png).decode("ascii")
    return (f'<figure><img alt="{esc(caption)}" src="data:image/png;base64,{data}">'
            f"<figcaption>{esc(caption)}</figcaption></figure>")


STYLE = """
body { font-family: system-ui, -apple-system, 'Segoe UI', Helvetica, Arial, sans-serif; margin: 2em auto;
       max-width: 1020px; color: #111; line-height: 1.45; padding: 0 1em; }
h1 { font-size: 1.6em; margin-bottom: 0.2em; } h2 { font-size: 1.25em; border-bottom: 1px solid #bbb; margin-top: 1.8em; }
table { border-collapse: collapse; margin: 0.6em 0; font-size: 0.9em; }
th, td { border: 1px solid #bbb; padding: 0.25em 0.6em; text-align: right; vertical-align: middle; }
th:first-child, td:first-child { text-align: left; }
thead th { background: #eee; }
.verdict { border-left: 6px solid #0072B2; background: #f2f7fb; padding: 0.7em 1em; margin: 1em 0; }
.caution { border-left: 6px solid #D55E00; background: #fdf3ec; padding: 0.7em 1em; margin: 1em 0; }
.muted { color: #555; font-size: 0.9em; }
.flag { color: #a33; font-weight: 600; }
figure { margin: 1em 0; } figcaption { font-size: 0.88em; color: #333; }
img { max-width: 100%; height: auto; border: 1px solid #ddd; }
.mol svg { width: 150px; height: 110px; }
code { font-size: 0.92em; background: #f4f4f4; padding: 0 0.2em; }
"""
