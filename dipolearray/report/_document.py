from __future__ import annotations

import base64
import datetime as _dt
import html
import json
import tomllib
from pathlib import Path

import numpy as np

from .._version import __version__
from ..errors import InputError
from ._safety import CAUTION, TYPICAL_BREAKDOWN_KV_PER_MM

FORMATS = ("html", "markdown")


def _fmt(v, digits=5):
    if v is None:
        return "-"
    if isinstance(v, (list, tuple)) and len(v) == 2 and all(isinstance(x, float) for x in v):
        re, loss = v
        return f"{re:.{digits}g} - j {loss:.3g}" if loss else f"{re:.{digits}g}"
    if isinstance(v, float):
        return "nan" if v != v else f"{v:.{digits}g}"
    return str(v)


def _run_name(config_text, fallback):
    if not config_text:
        return fallback
    try:
        return str(tomllib.loads(config_text).get("run", {}).get("name", fallback))
    except tomllib.TOMLDecodeError:
        return fallback


def _file_kind(path):
    from ..store import FORMAT_NAME
    from ..store._hdf5 import _h5py
    from ..store._sweep import SWEEP_FORMAT

    p = Path(path)
    if not p.exists():
        raise InputError(f"path: no such file {p}", "path")
    try:
        with _h5py().File(p, "r") as f:
            fmt = f.attrs.get("format")
    except OSError as exc:
        from ..errors import SchemaError

        raise SchemaError(f"{p}: not an HDF5 file ({exc})") from None
    fmt = fmt.decode() if isinstance(fmt, bytes) else fmt
    if fmt == SWEEP_FORMAT:
        return "sweep"
    from ..store import SPECTRUM_FORMAT_NAME

    if fmt == SPECTRUM_FORMAT_NAME:
        return "spectrum"
    if fmt == FORMAT_NAME:
        return "result"
    from ..errors import SchemaError

    raise SchemaError(f"{p}: not a dipolearray result, sweep or spectrum file (format attribute {fmt!r})")


def file_kind(path) -> str:
    """What a dipolearray HDF5 file holds: ``"result"``, ``"sweep"`` or ``"spectrum"`` (else SchemaError)."""
    return _file_kind(path)


# ---------------------------------------------------------------- content blocks


def _cautions(notes):
    blocks = [("warning", CAUTION)]
    for n in notes:
        blocks.append(("warning", n))
    table = ", ".join(f"{k} {v:g}" for k, v in TYPICAL_BREAKDOWN_KV_PER_MM.items())
    blocks.append(
        (
            "p",
            "Typical short-term breakdown strengths used for these warnings, kV/mm (common practice, no "
            f"source; they vary with thickness, temperature, moisture and ageing): {table}.",
        )
    )
    return blocks


def _result_blocks(path, figures_dir, prefix, resolution, progress=None):
    from ..observables import field_enhancement
    from ..store import load_result, read_config_text
    from ._figures import figure_notes, run_figures
    from ._summary import run_summary

    sol = load_result(path)
    text = read_config_text(path)
    enh = field_enhancement(sol)
    info = run_summary(sol, enhancement=enh)
    figs = run_figures(
        sol, figures_dir, enhancement=enh, resolution=resolution, prefix=prefix, progress=progress
    )
    name = _run_name(text, Path(path).stem)
    scene = sol.scene
    b = [("h1", f"dipolearray report: {name}")]
    b.append(
        (
            "p",
            f"Result file {Path(path).name}; report written by dipolearray {__version__} at "
            f"{_dt.datetime.now(_dt.UTC).isoformat(timespec='seconds')}.",
        )
    )
    b += _cautions(info["breakdown_notes"])
    b.append(("h2", "Inputs"))
    rows = [
        ("bodies", info["n_bodies"]),
        (
            "boundary",
            "periodic box (bulk, Ewald summation)" if scene.boundary == "periodic" else "open sample",
        ),
        ("volume fraction", _fmt(info.get("volume_fraction"))),
        ("host permittivity", _fmt(info["eps_host"])),
        ("applied field", "-" if scene.field_V_per_m is None else f"{scene.field_V_per_m / 1e6:.4g} kV/mm"),
        ("field directions", "; ".join("(" + ", ".join(f"{v:g}" for v in e) + ")" for e in scene.field)),
        ("reference length", "-" if scene.length_unit_m is None else f"{scene.length_unit_m * 1e6:.4g} um"),
    ]
    if scene.sample_radius:
        rows.append(("sample radius (reduced)", _fmt(float(scene.sample_radius))))
    if scene.box is not None:
        rows.append(("box (reduced)", " x ".join(f"{v:.4g}" for v in scene.box)))
    b.append(("table", ("quantity", "value"), rows))
    b.append(
        (
            "table",
            ("population", "shape", "semi-axes (reduced)", "permittivity", "bodies"),
            [
                (
                    p["name"],
                    p["shape"],
                    ", ".join(f"{v:.4g}" for v in p["semi_axes"]),
                    _fmt(p["eps"]),
                    p["n_bodies"],
                )
                for p in info["populations"]
            ],
        )
    )
    if text:
        b.append(("p", "Config that produced the run:"))
        b.append(("pre", text))
    b.append(("h2", "Effective permittivity"))
    if "eps_eff_isotropic" in info:
        what = (
            "bulk (periodic box, conducting boundary)"
            if scene.boundary == "periodic"
            else ("the spherical sample (from its total moment)")
        )
        b.append(("p", f"Effective relative permittivity of {what}; eps = eps' - j eps''."))
        if "eps_eff_tensor_real" in info:
            re, loss = np.array(info["eps_eff_tensor_real"]), np.array(info["eps_eff_tensor_loss"])
            b.append(
                (
                    "table",
                    ("row", "eps' x", "eps' y", "eps' z", "eps'' x", "eps'' y", "eps'' z"),
                    [
                        ("xyz"[i], *[f"{v:.6g}" for v in re[i]], *[f"{v:.4g}" for v in loss[i]])
                        for i in range(3)
                    ],
                )
            )
            b.append(
                ("p", "Principal values: " + "; ".join(_fmt(v) for v in info["eps_eff_principal"]) + ".")
            )
        err = info["eps_eff_numerical_error"]
        iso = info["eps_eff_isotropic"]
        line = (
            f"Isotropic part (trace / 3): {_fmt(iso, 7)}; numerical uncertainty about {err:.2g} "
            "(solver residual)."
        )
        if "loss_tangent_eff" in info:
            line += f" Loss tangent {info['loss_tangent_eff']:.4g}."
        b.append(("p", line))
        b.append(
            (
                "p",
                "Uncertainty: this is one realization. The spread between random realizations (and so "
                "a confidence interval) needs an ensemble: `dipolearray sweep` on the same config with "
                "sweep.realizations. An open sample also carries a finite-size surface correction of "
                "order 1/(sample radius).",
            )
        )
        mix = info.get("mixing")
        if mix:
            b.append(("h2", "Comparison with mixing rules"))
            b.append(("p", mix["note"] + "."))
            ci = iso[0]
            rows = [(k, _fmt(v), f"{100 * (ci - v[0]) / v[0]:+.2f} %") for k, v in mix["rules"].items()]
            b.append(("table", ("rule", "eps_eff", "(computed - rule) / rule, eps'"), rows))
            rows = [
                (k, f"{lo:.5g}", f"{hi:.5g}", "yes" if lo - 1e-9 <= ci <= hi + 1e-9 else "NO")
                for k, (lo, hi) in mix["bounds"].items()
            ]
            b.append(("table", ("bounds", "lower", "upper", "computed eps' within"), rows))
        elif len(scene.populations) > 1:
            b.append(
                ("p", "Mixing rules: not shown, the scene has several populations (the rules are two-phase).")
            )
    else:
        b.append(("p", "Not available: the scene has neither a sample radius nor a periodic box."))
    b.append(("h2", "Field enhancement"))
    st = info["field_enhancement"]
    labels = {
        "local": "local (exciting) field at body centres",
        "interior": "field inside the bodies",
        "surface": "largest host field on body surfaces",
    }
    rows = [
        (labels[k], *[f"{st[k][q]:.4g}" for q in ("mean", "p50", "p95", "p99", "max")], st[k]["argmax_body"])
        for k in ("local", "interior", "surface")
    ]
    b.append(("table", ("|E| / |E0|", "mean", "median", "95th pct", "99th pct", "max", "body at max"), rows))
    if "peak_host_field_V_per_m" in info:
        b.append(
            (
                "p",
                f"In SI at the applied {scene.field_V_per_m / 1e6:.4g} kV/mm: peak host surface field about "
                f"{info['peak_host_field_V_per_m'] / 1e6:.4g} kV/mm, peak local field "
                f"{info['peak_local_field_V_per_m'] / 1e6:.4g} kV/mm "
                + (
                    "(multipole estimates, to the model error reported below)."
                    if sol.multipoles is not None
                    else "(point-dipole estimates, low in narrow gaps)."
                ),
            )
        )
    b.append(("h2", "Figures"))
    for f in figs:
        b.append(("figure", f))
    for name, why in figure_notes(sol):
        b.append(("p", f"Figure {name}: {why}."))
    b.append(("h2", "Solver record"))
    rows = [
        ("method", f"{sol.method} ({sol.method_reason})"),
        ("backend", sol.backend),
        ("converged", f"{sol.converged} ({sol.reason})"),
        ("iterations", sol.iterations),
        ("operator applies", sol.n_applies),
        ("relative tolerance", f"{sol.rtol:g}"),
        ("true final residual per field", ", ".join(f"{v:.3g}" for v in np.atleast_1d(sol.residual))),
        ("wall time", f"{sol.wall_s:.3g} s"),
    ]
    from ._summary import model_summary

    model = model_summary(sol)
    rows.append(("physical model", model["model"]))
    if model["model_error"] is not None:
        rows.append(("estimated model error of the dipole moments", f"{model['model_error']:.2g}"))
    if model["closest_gap_ratio"] is not None:
        rows.append(("closest gap between spheres", f"{model['closest_gap_ratio']:.3g} radii"))
    rows.append(("model note", model["note"]))
    b.append(("table", ("item", "value"), rows))
    return name, b, figs


def _sweep_blocks(path, figures_dir, prefix):
    from ..config import sweep_rule_inputs
    from ..sweep import comparison_table, load_sweep
    from ..sweep._run import SweepResult
    from ._figures import sweep_figures

    res = load_sweep(path)
    text = res.config_text
    if text is None:
        raise InputError(
            f"path: {path} is a sweep without a stored config; report needs a config sweep", "path"
        )
    meta = json.loads(res.description) if res.description.startswith("{") else {}
    inputs = sweep_rule_inputs(res, text, meta.get("overrides", ()))
    name = _run_name(text, Path(path).stem)
    b = [("h1", f"dipolearray sweep report: {name}")]
    b.append(
        (
            "p",
            f"Sweep file {Path(path).name}; report written by dipolearray {__version__} at "
            f"{_dt.datetime.now(_dt.UTC).isoformat(timespec='seconds')}.",
        )
    )
    notes = []
    from ._safety import breakdown_notes

    cfg_field = None
    try:
        from ..config import parse_config

        cfg_field = parse_config(text, "<sweep>", check_sweep=False).field["strength"]
    except Exception:  # noqa: BLE001 - the report still renders without the SI field
        cfg_field = None
    peaks = [r.get("enhancement_surface_max") for recs in res.records for r in recs]
    peaks = [p for p in peaks if p is not None]
    peak = max(peaks) * cfg_field if (peaks and cfg_field) else None
    notes = breakdown_notes(cfg_field, peak)
    b += _cautions(notes)
    b.append(("h2", "Inputs"))
    param = inputs["parameter"] or "(none: an ensemble of the config as written)"
    b.append(
        (
            "table",
            ("item", "value"),
            [
                ("swept parameter", param),
                ("state points", len(res.points)),
                ("finished realizations per point", ", ".join(str(n) for n in res.n)),
                (
                    "host permittivity (first point)",
                    _fmt([inputs["eps_host"][0].real, -inputs["eps_host"][0].imag]),
                ),
                (
                    "filler permittivity (first point)",
                    _fmt([inputs["eps_inclusion"][0].real, -inputs["eps_inclusion"][0].imag]),
                ),
            ],
        )
    )
    b.append(("p", "Config of the sweep:"))
    b.append(("pre", text))
    if meta.get("overrides"):
        b.append(
            ("p", "Overrides applied on top: " + ", ".join(f"{k} = {v!r}" for k, v in meta["overrides"]))
        )
    b.append(("h2", "Effective permittivity and mixing rules"))
    aug = SweepResult(
        [
            {"volume_fraction": float(f), "eps_inclusion": float(np.real(ei)), "eps_host": float(np.real(eh))}
            for f, ei, eh in zip(inputs["fraction"], inputs["eps_inclusion"], inputs["eps_host"], strict=True)
        ],
        res.tensors,
        res.records,
    )
    table = comparison_table(aug)
    ci = res.confidence_interval()
    loss = -np.imag(res.isotropic_mean)
    rows = []
    for i, row in enumerate(table):
        inside = (
            row["hashin_shtrikman_lower"] - 1e-9 <= row["computed"] <= row["hashin_shtrikman_upper"] + 1e-9
        )
        rows.append(
            (
                _fmt(float(inputs["x"][i])),
                f"{row['volume_fraction']:.4f}",
                int(res.n[i]),
                f"{row['computed']:.5g} +/- {row['standard_error']:.2g}",
                f"[{ci[i, 0]:.5g}, {ci[i, 1]:.5g}]",
                f"{loss[i]:.4g}",
                f"{row['maxwell_garnett']:.5g}",
                f"{row['bruggeman']:.5g}",
                f"[{row['hashin_shtrikman_lower']:.5g}, {row['hashin_shtrikman_upper']:.5g}]",
                "yes" if inside else "NO",
                _fmt(row["significance"], 3),
            )
        )
    b.append(
        (
            "table",
            (
                inputs["x_label"],
                "realized fraction",
                "n",
                "eps' mean +/- SE",
                "95 % interval",
                "eps'' mean",
                "Maxwell Garnett",
                "Bruggeman",
                "HS bounds",
                "within HS",
                "(computed - MG) / SE",
            ),
            rows,
        )
    )
    mean = res.mean
    b.append(
        (
            "p",
            "Mean tensor diagonal eps' (xx, yy, zz) per point: "
            + "; ".join(", ".join(f"{v:.4g}" for v in np.real(np.diag(m))) for m in mean)
            + ".",
        )
    )
    b.append(("h2", "Field enhancement"))
    rows = []
    for i, recs in enumerate(res.records):
        p99 = [r["enhancement_surface_p99"] for r in recs if "enhancement_surface_p99" in r]
        mx = [r["enhancement_surface_max"] for r in recs if "enhancement_surface_max" in r]
        lm = [r["enhancement_local_max"] for r in recs if "enhancement_local_max" in r]
        rows.append(
            (
                _fmt(float(inputs["x"][i])),
                f"{np.mean(p99):.4g}" if p99 else "-",
                f"{np.max(mx):.4g}" if mx else "-",
                f"{np.max(lm):.4g}" if lm else "-",
            )
        )
    b.append(
        (
            "table",
            (
                inputs["x_label"],
                "host surface |E|/|E0|, 99th pct (mean)",
                "host surface max",
                "local field max",
            ),
            rows,
        )
    )
    figs = sweep_figures(res, figures_dir, inputs, prefix=prefix)
    b.append(("h2", "Figures"))
    for f in figs:
        b.append(("figure", f))
    b.append(("h2", "Solver record"))
    rows = []
    for i, recs in enumerate(res.records):
        its = [int(r["iterations"]) for r in recs]
        rows.append(
            (
                _fmt(float(inputs["x"][i])),
                ", ".join(sorted({str(r["method"]) for r in recs})) or "-",
                f"{sum(bool(r['converged']) for r in recs)}/{len(recs)}",
                f"{np.mean(its):.1f} / {max(its)}" if its else "-",
                f"{sum(float(r['wall_s']) for r in recs):.3g} s",
                ", ".join(str(int(r["n_bodies"])) for r in recs[:1]) or "-",
            )
        )
    b.append(
        (
            "table",
            (inputs["x_label"], "method", "converged", "iterations mean / max", "wall time", "bodies"),
            rows,
        )
    )
    return name, b, figs


def _spectrum_blocks(path, figures_dir, prefix):
    from ..spectra import loss_peak
    from ..store import load_spectrum
    from ._figures import spectrum_figures

    sp, resp, text = load_spectrum(path)
    name = _run_name(text, Path(path).stem)
    b = [("h1", f"dipolearray spectrum report: {name}")]
    b.append(("p", f"Spectrum file {Path(path).name}; report written by dipolearray {__version__} at "
              f"{_dt.datetime.now(_dt.UTC).isoformat(timespec='seconds')}."))  # fmt: skip
    b += _cautions([])
    b.append(("h2", "Inputs"))
    if text:
        b.append(("pre", text))
    b.append(("h2", "Spectral representation"))
    if sp is None:
        b.append(("p", "Several filler materials: no single spectral representation exists, every frequency "
                  "was solved in turn (warm-started from its neighbour)."))  # fmt: skip
    rows = (
        []
        if sp is None
        else [
            ("boundary", sp.boundary),
            ("volume fraction", f"{sp.volume_fraction:.5g}"),
            ("method", sp.method),
            ("poles", len(sp.poles)),
            ("operator applies", sp.n_applies),
            ("converged", f"{sp.converged} (last relative change {sp.estimate:.2g})"),
            (
                "residue sum (isotropic; the volume fraction for a periodic box)",
                f"{np.trace(sp.residue_sum()) / 3:.8g}",
            ),
            ("first moment of the residues (isotropic)", f"{np.trace(sp.first_moment()) / 3:.6g}"),
        ]
    )
    if rows:
        b.append(("table", ("item", "value"), rows))
        b.append(
            (
                "p",
                "The poles and residues depend on the geometry alone (Bergman 1978; Milton 1981): the same "
                "file gives the effective permittivity for any other host and filler permittivities.",
            )
        )
    if resp is not None:
        f = resp["frequency_Hz"]
        b.append(("h2", "Composite over frequency"))
        pk = loss_peak(f, resp["eps_loss"])
        rows = [
            ("computed", f"{pk['frequency_hz']:.4g}", f"{pk['eps_loss']:.4g}", f"{pk['width_decades']:.3g}")
        ]
        if "maxwell_garnett" in resp:
            mg = resp["maxwell_garnett"]
            m = loss_peak(f, -mg.imag)
            rows.append(("Maxwell Garnett (same phases)", f"{m['frequency_hz']:.4g}", f"{m['eps_loss']:.4g}",
                         f"{m['width_decades']:.3g}"))  # fmt: skip
        b.append(("table", ("loss peak", "frequency (Hz)", "eps''", "width (decades)"), rows))
        if not pk["inside"]:
            b.append(
                (
                    "p",
                    "The largest loss is at an end of the frequency grid: widen [frequency] to see the peak.",
                )
            )
        picks = np.unique(np.linspace(0, len(f) - 1, min(len(f), 9)).astype(int))
        rows = [
            (f"{f[i]:.4g}", f"{resp['eps_real'][i]:.6g}", f"{resp['eps_loss'][i]:.4g}",
             f"{resp['loss_tangent'][i]:.4g}", f"{resp['conductivity_S_per_m'][i]:.4g}")
            for i in picks
        ]  # fmt: skip
        b.append(("table", ("frequency (Hz)", "eps'", "eps''", "loss tangent", "sigma' (S/m)"), rows))
    figs = spectrum_figures(sp, resp, figures_dir, prefix=prefix)
    b.append(("h2", "Figures"))
    for fig in figs:
        b.append(("figure", fig))
    return name, b, figs


# ---------------------------------------------------------------- rendering

_CSS = """body{font-family:system-ui,sans-serif;max-width:60em;margin:2em auto;padding:0 1em;color:#111}
table{border-collapse:collapse;margin:0.6em 0;font-size:0.9em}td,th{border:1px solid #999;padding:0.2em 0.5em}
th{background:#eee}pre{background:#f4f4f4;padding:0.6em;overflow-x:auto;font-size:0.85em}
.warning{border:2px solid #000;background:#fff3d6;padding:0.5em 0.8em;margin:0.6em 0}
figure{margin:1em 0}figure img{max-width:100%}figcaption{font-size:0.9em}"""


def _html(blocks, folder_name):
    out = ["<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">']
    title = next((t for k, t, *_ in blocks if k == "h1"), "dipolearray report")
    out.append(f"<title>{html.escape(title)}</title><style>{_CSS}</style></head><body>")
    for blk in blocks:
        kind = blk[0]
        if kind in ("h1", "h2", "p"):
            out.append(f"<{kind}>{html.escape(blk[1])}</{kind}>")
        elif kind == "warning":
            out.append(f'<div class="warning" role="note">{html.escape(blk[1])}</div>')
        elif kind == "pre":
            out.append(f"<pre>{html.escape(blk[1])}</pre>")
        elif kind == "table":
            head = "".join(f"<th>{html.escape(str(h))}</th>" for h in blk[1])
            body = "".join(
                "<tr>" + "".join(f"<td>{html.escape(str(c))}</td>" for c in row) + "</tr>" for row in blk[2]
            )
            out.append(f"<table><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>")
        elif kind == "figure":
            f = blk[1]
            data = base64.b64encode(Path(f["png"]).read_bytes()).decode()
            png = f"{folder_name}/{Path(f['png']).name}"
            svg = f"{folder_name}/{Path(f['svg']).name}"
            out.append(
                f'<figure id="{f["name"]}"><img alt="{html.escape(f["title"])}" '
                f'src="data:image/png;base64,{data}">'
                f"<figcaption><b>{html.escape(f['title'])}.</b> {html.escape(f['caption'])} "
                f'Files: <a href="{png}">PNG</a>, <a href="{svg}">SVG</a>.</figcaption></figure>'
            )
    out.append("</body></html>")
    return "\n".join(out) + "\n"


def _md_cell(c):
    return str(c).replace("|", "\\|").replace("\n", " ")


def _markdown(blocks, folder_name):
    out = []
    for blk in blocks:
        kind = blk[0]
        if kind == "h1":
            out += [f"# {blk[1]}", ""]
        elif kind == "h2":
            out += [f"## {blk[1]}", ""]
        elif kind == "p":
            out += [blk[1], ""]
        elif kind == "warning":
            out += [f"> **{blk[1]}**", ""]
        elif kind == "pre":
            out += ["```toml", blk[1].rstrip("\n"), "```", ""]
        elif kind == "table":
            out.append("| " + " | ".join(_md_cell(h) for h in blk[1]) + " |")
            out.append("|" + "---|" * len(blk[1]))
            out += ["| " + " | ".join(_md_cell(c) for c in row) + " |" for row in blk[2]]
            out.append("")
        elif kind == "figure":
            f = blk[1]
            png = f"{folder_name}/{Path(f['png']).name}"
            svg = f"{folder_name}/{Path(f['svg']).name}"
            out += [f"![{f['title']}]({png})", "", f"**{f['title']}.** {f['caption']} ([SVG]({svg}))", ""]
    return "\n".join(out)


def write_report(path, output=None, *, format="html", overwrite=False, resolution=161, progress=None):
    """Write a self-contained report of a result file or a sweep file.

    Parameters
    ----------
    path : str or Path
        A result (``dipolearray solve``) or sweep (``dipolearray sweep``) HDF5 file.
    output : str or Path, optional
        Report file; default next to ``path`` with ``.html`` or ``.md``.
    format : {"html", "markdown"}
        HTML embeds every figure (and links its PNG and SVG files); Markdown links the
        PNG files written beside it.
    overwrite : bool
        Replace an existing report.
    resolution : int
        Grid points per side of the field slice.
    progress : callable, optional
        ``progress(stage, done, total)`` while the figures are made.

    Returns
    -------
    dict
        ``report`` (Path), ``figures`` (list of figure records), ``kind``
        (``"result"`` or ``"sweep"``).
    """
    if format not in FORMATS:
        raise InputError(f"format: {format!r} is not allowed (choose from {', '.join(FORMATS)})", "format")
    kind = _file_kind(path)
    suffix = ".html" if format == "html" else ".md"
    out = Path(output) if output else Path(path).with_suffix(suffix)
    if out.exists() and not overwrite:
        raise InputError(f"output: {out} exists; pass --overwrite to replace it", "output")
    folder = out.with_name(out.stem + "_figures")
    if kind == "result":
        _name, blocks, figs = _result_blocks(path, folder, "", resolution, progress)
    elif kind == "spectrum":
        _name, blocks, figs = _spectrum_blocks(path, folder, "")
    else:
        _name, blocks, figs = _sweep_blocks(path, folder, "")
    text = _html(blocks, folder.name) if format == "html" else _markdown(blocks, folder.name)
    out.parent.mkdir(parents=True, exist_ok=True)
    tmp = out.with_name(f".{out.name}.tmp")
    tmp.write_text(text, encoding="utf-8")
    tmp.replace(out)
    return {"report": out, "figures": figs, "kind": kind}


def write_figures(path, folder=None, *, resolution=161, progress=None):
    """Write the figures of a result or sweep file (PNG and SVG) without a report.

    Returns
    -------
    list of dict
        Figure records (``name``, ``title``, ``caption``, ``png``, ``svg``).
    """
    kind = _file_kind(path)
    folder = Path(folder) if folder else Path(path).with_name(Path(path).stem + "_figures")
    if kind == "result":
        from ..store import load_result
        from ._figures import run_figures

        return run_figures(load_result(path), folder, resolution=resolution, progress=progress)
    if kind == "spectrum":
        from ..store import load_spectrum
        from ._figures import spectrum_figures

        sp, resp, _text = load_spectrum(path)
        return spectrum_figures(sp, resp, folder)
    _name, _blocks, figs = _sweep_blocks(path, folder, "")
    return figs
