"""Command-line commands about references, sources, SNR, horizons and backgrounds."""

from __future__ import annotations

import numpy as np

from .errors import InputError

__all__ = ["add_commands"]

DEFAULT_AGAINST = ["lisa", "decigo", "et", "aligo"]
DEFAULT_MASSES = [10, 30, 100, 300, 1e3, 3e3, 1e4, 3e4, 1e5, 3e5, 1e6]


def _q(text, unit, option, positive=True):
    from .quantities import parse_quantity
    try:
        v = float(parse_quantity(text, unit, allow_plain=unit in ("Hz", "solMass")).value)
    except ValueError as exc:
        raise InputError(str(exc), source="command line", field=option, value=text) from None
    if positive and v <= 0:
        raise InputError("expected a positive value", source="command line", field=option, value=text)
    return v


def _number(text, option, lo=0.0):
    try:
        v = float(text)
    except (TypeError, ValueError):
        raise InputError("expected a plain number", source="command line", field=option, value=text) from None
    if not np.isfinite(v) or v < lo:
        raise InputError(f"expected a number >= {lo:g}", source="command line", field=option, value=text)
    return v


def _references(names, confusion=None):
    from pathlib import Path

    from .references import REFERENCES, user_curve
    out = []
    for name in names:
        if name.lower() in REFERENCES:
            out.append((REFERENCES[name.lower()], {"confusion_years": confusion} if name.lower() == "lisa" and confusion else {}))
        elif Path(name).suffix.lower() in (".csv", ".ecsv"):
            out.append((user_curve(name), {}))
        else:
            raise InputError(f"unknown reference; expected one of {', '.join(REFERENCES)} or a .csv/.ecsv curve file",
                             source="command line", field="--against", value=name)
    return out


def _confusion(args):
    if getattr(args, "confusion", None) is None:
        return None
    from .references import CONFUSION_PARAMETERS
    years = _number(args.confusion, "--confusion")
    if years not in CONFUSION_PARAMETERS:
        raise InputError(f"expected one of {', '.join(f'{k:g}' for k in CONFUSION_PARAMETERS)} (years)",
                         source="command line", field="--confusion", value=args.confusion)
    return years


def _source_from_args(args):
    from .sources import Inspiral, Monochromatic, load_sources
    if getattr(args, "source", None):
        return load_sources(args.source)
    if args.frequency is not None:
        if args.h0 is None:
            raise InputError("a monochromatic source needs --h0 with --frequency", source="command line", field="--h0")
        return [Monochromatic("monochromatic", _q(args.frequency, "Hz", "--frequency"), _number(args.h0, "--h0"))]
    if args.mass1 is None or args.mass2 is None:
        raise InputError("give --source FILE, or --mass1 and --mass2 with --distance or --redshift, "
                         "or --frequency with --h0", source="command line")
    m1, m2 = _q(args.mass1, "solMass", "--mass1"), _q(args.mass2, "solMass", "--mass2")
    if (args.distance is None) == (args.redshift is None):
        raise InputError("give exactly one of --distance and --redshift", source="command line")
    if args.distance is not None:
        d = _q(args.distance, "m", "--distance")
        return [Inspiral.from_masses(m1, m2, distance=d, name=f"{m1:g}+{m2:g} Msun at {d / 3.0856775814913673e22:.4g} Mpc")]
    z = _number(args.redshift, "--redshift")
    return [Inspiral.from_masses(m1, m2, redshift=z, name=f"{m1:g}+{m2:g} Msun at z = {z:g}")]


def _save(table, path):
    from .tables import write_table
    write_table(table, path)
    print(f"wrote table {path}")


def _figure(path, draw, title):
    from matplotlib.figure import Figure

    from . import __version__
    from .plotting import save_figure
    fig = Figure(figsize=(6.4, 4.4), layout="constrained")
    ax = fig.add_subplot()
    draw(ax)
    ax.set_title(title)
    save_figure(fig, path, metadata={"Title": title, "Creator": f"gwclock {__version__}"})
    print(f"wrote figure {path}")


def _check_outputs(args):
    from .tables import check_outputs
    check_outputs(args)


def cmd_references(args):
    from .references import REFERENCES, TABULATED_ONLY
    for r in REFERENCES.values():
        print(f"{r.key:7s} {r.label}  [{r.convention}; x{r.sky_factor:.4g} to sky average; "
              f"{r.band[0]:g}-{r.band[1]:g} Hz]")
        print(f"        {r.source}")
        if r.note:
            print(f"        {r.note}")
        if not r.checked:
            print("        (coefficients not yet checked against the paper's text)")
    for name, text in TABULATED_ONLY.items():
        print(f"{'-':7s} {name}: no accepted analytic form; {text}")
    print("user curves: any .csv/.ecsv with 'frequency' and 'asd' or 'psd' and a declared 'convention'")
    return 0


def cmd_reference(args):
    from astropy.table import Table

    from .cli import _grid
    from .tables import Column, provenance
    (ref, opts), = _references([args.name], _confusion(args))
    f = _grid(args)
    _check_outputs(args)
    if args.convention == "native":
        psd, conv = ref.native(f, **opts), ref.convention
    else:
        psd, conv = ref.sky_averaged(f, **opts), "sky-averaged"
    t = Table()
    t["frequency"] = Column(f, unit="Hz")
    t["asd"] = Column(np.sqrt(psd), unit="Hz(-1/2)")
    t.meta.update(provenance(ref.label, "-"))
    t.meta.update(reference=ref.key, source=ref.source, convention=conv,
                  sky_factor=ref.sky_factor, valid_band=f"{ref.band[0]:g} Hz to {ref.band[1]:g} Hz")
    if opts:
        t.meta["galactic_confusion_years"] = opts["confusion_years"]
    print(f"{ref.label}: {conv}; {ref.source}")
    if args.table:
        _save(t, args.table)
    if args.plot:
        from .plotting import plot_lines
        _figure(args.plot, lambda ax: plot_lines([(f"{ref.label} ({conv})", f, np.sqrt(psd))], ax=ax,
                                                 ylabel=r"strain ASD [Hz$^{-1/2}$]"), ref.label)
    return 0


def cmd_track(args):
    from astropy.table import Table

    from .sources import MARKS
    from .tables import Column, provenance
    (src,) = _source_from_args(args)
    fmin, fmax = _q(args.fmin, "Hz", "--fmin"), _q(args.fmax, "Hz", "--fmax")
    if fmin >= fmax:
        raise InputError("--fmin must be below --fmax", source="command line")
    _check_outputs(args)
    try:
        tau, f, hc = src.track(fmin, fmax, args.points)
    except ValueError as exc:
        raise InputError(str(exc), source="command line") from None
    t = Table()
    t["time_to_merger"] = Column(tau, unit="s")
    t["frequency"] = Column(f, unit="Hz")
    t["hc"] = Column(hc)
    t.meta.update(provenance(src.name, "-"))
    t.meta.update(chirp_mass_detector_frame_msun=src.chirp_mass / 1.988409870698051e30, redshift=src.redshift,
                  luminosity_distance_m=src.distance, isco_frequency_hz=src.isco_frequency,
                  convention="h_c = 2 f |h~| averaged over sky, polarisation and inclination (RCL normalisation)")
    print(f"{src.name}: z = {src.redshift:.4g}, detector-frame chirp mass "
          f"{src.chirp_mass / 1.988409870698051e30:.5g} Msun, last stable orbit at {src.isco_frequency:.4g} Hz")
    marks = []
    for label, before in MARKS.items():
        fm = float(src.frequency_at(before))
        print(f"  {label:8s} before merger: {fm:.5g} Hz")
        if f[0] <= fm <= f[-1]:
            marks.append((label, fm, float(src.characteristic_strain(fm))))
    if args.table:
        _save(t, args.table)
    if args.plot:
        from .plotting import plot_lines
        _figure(args.plot, lambda ax: plot_lines([(src.name, f, hc)], ax=ax, ylabel="characteristic strain $h_c$",
                                                 marks=marks), f"{src.name}: track")
    return 0


def _clock(args):
    from .mission import load_mission
    from .snr import TunedCurve
    mission, digest = load_mission(args.mission)
    return mission, digest, TunedCurve(mission.design())


def cmd_snr(args):
    from astropy.table import Table

    from .snr import clock_snr, reference_snr
    from .tables import Column, provenance
    mission, digest, curve = _clock(args)
    sources = _source_from_args(args)
    refs = _references(args.against or [], _confusion(args))
    T = _q(args.observation, "s", "--observation") if args.observation else mission.design().duration
    tune = _q(args.tune, "Hz", "--tune") if args.tune else None
    cadence = _q(args.cadence, "s", "--cadence")
    overhead = _q(args.overhead, "s", "--overhead", positive=False)
    _check_outputs(args)
    rows = []
    for src in sources:
        try:
            rows.append(clock_snr(curve, src, args.schedule, T, tune, cadence, overhead))
        except ValueError as exc:
            raise InputError(str(exc), source="command line") from None
        for ref, opts in refs:
            rows.append(reference_snr(ref, src, T, opts))
    print(f"{'detector':32s} {'source':30s} {'schedule':9s} {'SNR':>10s}  band observed")
    for r in rows:
        band = f"{r.f_start:.3g}-{r.f_end:.3g} Hz" if np.isfinite(r.f_start) else "-"
        print(f"{r.detector[:32]:32s} {r.source[:30]:30s} {r.schedule:9s} {r.snr:10.4g}  {band}  {r.note}")
    if args.table:
        t = Table()
        t["detector"] = [r.detector for r in rows]
        t["source"] = [r.source for r in rows]
        t["schedule"] = [r.schedule for r in rows]
        t["snr"] = Column([r.snr for r in rows])
        t["f_start"] = Column([r.f_start for r in rows], unit="Hz")
        t["f_end"] = Column([r.f_end for r in rows], unit="Hz")
        t["observed"] = Column([r.observed for r in rows], unit="s")
        t["note"] = [r.note for r in rows]
        t.meta.update(provenance(mission.name, digest))
        t.meta["convention"] = "sky-, polarisation- and inclination-averaged SNR; references converted to sky average"
        _save(t, args.table)
    return 0


def cmd_horizon(args):
    from astropy.table import Table

    from .horizon import horizon
    from .snr import clock_snr, reference_snr
    from .tables import Column, provenance
    mission, digest, curve = _clock(args)
    masses = [_q(m, "solMass", "--masses") for m in (args.masses or DEFAULT_MASSES)]
    thr = _number(args.snr, "--snr", lo=1e-6)
    refs = _references(args.against if args.against is not None else DEFAULT_AGAINST, _confusion(args))
    T = mission.design().duration
    _check_outputs(args)
    detectors = [(mission.name, lambda s: clock_snr(curve, s, args.schedule, T).snr)]
    for ref, opts in refs:
        detectors.append((ref.label, lambda s, ref=ref, opts=opts: reference_snr(ref, s, T, opts).snr))
    t = Table()
    t["total_mass"] = Column(masses, unit="solMass")
    print(f"horizon at SNR {thr:g} (equal masses, Planck18; clock schedule '{args.schedule}')")
    series = []
    for label, fn in detectors:
        zs, ds = zip(*[horizon(fn, m, thr) for m in masses])
        key = label.split(" (")[0].lower().replace(" ", "_")
        t[f"z_{key}"] = Column(zs)
        t[f"distance_{key}"] = Column(np.array(ds) / 3.0856775814913673e22, unit="Mpc")
        print(f"  {label}: " + ", ".join(f"{m:g} Msun: {_reach(z)}" for m, z in zip(masses, zs)))
        series.append((label, np.array(masses), np.array(zs)))
    t.meta.update(provenance(mission.name, digest))
    t.meta.update(snr_threshold=thr, observation_s=T, clock_schedule=args.schedule,
                  note="0 means below threshold at any distance; inf means beyond z = 1000")
    if args.table:
        _save(t, args.table)
    if args.plot:
        from .plotting import plot_lines
        _figure(args.plot, lambda ax: plot_lines([(lab, x, np.where(np.isfinite(y), y, np.nan)) for lab, x, y in series],
                                                 ax=ax, xlabel=r"total mass [$M_\odot$] (source frame)",
                                                 ylabel="horizon redshift"), f"{mission.name}: horizon at SNR {thr:g}")
    return 0


def cmd_background(args):
    from astropy.table import Table

    from . import background as bg
    from .cli import _grid
    from .engine import envelope
    from .tables import Column, provenance
    from .mission import load_mission
    mission, digest = load_mission(args.mission)
    design = mission.design()
    f = _grid(args)
    refs = _references(args.against if args.against is not None else DEFAULT_AGAINST, _confusion(args))
    T = design.duration
    thr = _number(args.snr, "--snr", lo=1e-6)
    lo, hi, steps = _scan(args.scan)
    _check_outputs(args)
    h0 = bg.hubble_constant()
    t = Table()
    t["frequency"] = Column(f, unit="Hz")
    series = []
    env = envelope(design, f)
    t["omega_n_clock"] = Column(bg.omega_noise(f, env.total, h0))
    try:
        pi = bg.clock_scan_power_law(design, np.geomspace(lo, hi, steps), T, f, thr, h0=h0)
    except ValueError as exc:
        raise InputError(str(exc), source="command line", field="--scan") from None
    inscan = (f >= lo) & (f <= hi)
    t["omega_pi_clock"] = Column(np.where(inscan, pi, np.nan))
    series.append((f"{mission.name}: power-law integrated (scan)", f[inscan], pi[inscan]))
    for ref, opts in refs:
        key = ref.key
        sn = ref.sky_averaged(f, **opts)
        t[f"omega_n_{key}"] = Column(bg.omega_noise(f, sn, h0))
        inband = (f >= ref.band[0]) & (f <= ref.band[1])
        if inband.sum() >= 2:
            pif = bg.power_law_integrated(f[inband], sn[inband], T, thr, h0=h0)
            t[f"omega_pi_{key}"] = Column(_extend(f, pif, inband))
            series.append((f"{ref.label}: power-law integrated", f[inband], pif))
    t.meta.update(provenance(mission.name, digest))
    t.meta.update(snr_threshold=thr, observation_s=T, H0_per_s=h0, scan=f"{lo:g} Hz to {hi:g} Hz in {steps} tunings",
                  assumption=bg.SCAN_ASSUMPTION,
                  convention="Omega_n = 4 pi^2 f^3 S_n / (3 H0^2) for sky-averaged S_n; references: known-noise "
                             "single detector (Thrane & Romano 2013); PI columns are NaN outside each band")
    print(bg.SCAN_ASSUMPTION)
    i = int(np.argmin(np.where(inscan, pi, np.inf)))
    print(f"clock: best power-law integrated Omega {pi[i]:.3g} at {f[i]:.3g} Hz (SNR {thr:g}, {T / 3.15576e7:.3g} yr)")
    if args.table:
        _save(t, args.table)
    if args.plot:
        from .plotting import plot_lines
        _figure(args.plot, lambda ax: plot_lines(series, ax=ax, ylabel=r"$\Omega_{\rm gw}$ (power-law integrated)"),
                f"{mission.name}: stochastic background sensitivity")
    return 0


def _extend(f, values, mask):
    out = np.full(f.shape, np.nan)
    out[mask] = values
    return out


def _scan(text):
    from .quantities import parse_frequency
    parts = (text or "").split(":")
    try:
        lo, hi, steps = parse_frequency(parts[0]), parse_frequency(parts[1]), int(parts[2])
    except (IndexError, ValueError):
        raise InputError("expected F1:F2:COUNT, e.g. '5 mHz:5 Hz:12'", source="command line", field="--scan", value=text) from None
    if not (0 < lo < hi) or steps < 1:
        raise InputError("expected 0 < F1 < F2 and COUNT >= 1", source="command line", field="--scan", value=text)
    return lo, hi, steps


def against_args(sp, help_text):
    sp.add_argument("--against", nargs="*", help=help_text)
    sp.add_argument("--confusion", help="add LISA's galactic confusion for 0.5, 1, 2 or 4 years")


def _reach(z):
    """A horizon redshift as printed: 0 and inf are the ends of the searched range."""
    if z == 0:
        return "not reached"
    if not np.isfinite(z):
        return "z>1000"
    return f"z={z:.3g}"


def add_commands(sub, mission_arg, grid_args):
    sp = sub.add_parser("references", help="list the reference detectors with their sources and conventions")
    sp.set_defaults(func=cmd_references)

    sp = sub.add_parser("reference", help="export one reference detector curve")
    sp.add_argument("name", help="lisa, aligo, et, decigo, or a .csv/.ecsv curve file")
    sp.add_argument("--convention", choices=("native", "sky-averaged"), default="native",
                    help="as published (default) or converted to the sky average")
    sp.add_argument("--confusion", help="LISA galactic confusion for 0.5, 1, 2 or 4 years (default: off)")
    grid_args(sp)
    sp.set_defaults(func=cmd_reference)

    def source_args(sp):
        sp.add_argument("--source", help="source list (.toml with [[source]] tables, or .csv)")
        sp.add_argument("--mass1", help="first source-frame mass (solar masses)")
        sp.add_argument("--mass2", help="second source-frame mass (solar masses)")
        sp.add_argument("--distance", help="luminosity distance, e.g. '400 Mpc'")
        sp.add_argument("--redshift", help="redshift (Planck18 gives the distance)")
        sp.add_argument("--frequency", help="monochromatic source frequency (with --h0)")
        sp.add_argument("--h0", help="rms strain amplitude of a monochromatic source")

    def schedule_arg(sp):
        # the choices of gwclock.snr.SCHEDULES, written out so that building the parser imports no engine
        sp.add_argument("--schedule", choices=("fixed", "track", "best"), default="track",
                        help="clock schedule: one fixed tuning, retuned along the track, or the best of both")

    sp = sub.add_parser("track", help="frequency and characteristic-strain track of an inspiral")
    source_args(sp)
    sp.add_argument("--fmin", default="1e-5 Hz")
    sp.add_argument("--fmax", default="1e4 Hz")
    sp.add_argument("--points", type=int, default=300)
    sp.add_argument("--table")
    sp.add_argument("--plot")
    sp.set_defaults(func=cmd_track)

    sp = sub.add_parser("snr", help="SNR of sources in the mission and in reference detectors")
    mission_arg(sp)
    source_args(sp)
    schedule_arg(sp)
    sp.add_argument("--tune", help="fixed tuning (schedule fixed; default: the best)")
    sp.add_argument("--cadence", default="600 s", help="retuning interval (schedule track)")
    sp.add_argument("--overhead", default="0 s", help="time lost per retuning (schedule track)")
    sp.add_argument("--observation", help="observing time (default: the mission's duration)")
    against_args(sp, "reference detectors or curve files")
    sp.add_argument("--table")
    sp.set_defaults(func=cmd_snr)

    sp = sub.add_parser("horizon", help="redshift and distance reached at an SNR, versus total mass")
    mission_arg(sp)
    sp.add_argument("--snr", default="8")
    sp.add_argument("--masses", nargs="+", help="source-frame total masses (solar masses)")
    schedule_arg(sp)
    against_args(sp, f"references (default: {' '.join(DEFAULT_AGAINST)})")
    sp.add_argument("--table")
    sp.add_argument("--plot")
    sp.set_defaults(func=cmd_horizon)

    sp = sub.add_parser("background", help="stochastic-background sensitivity (Omega_gw)")
    mission_arg(sp)
    grid_args(sp)
    sp.add_argument("--scan", default="5 mHz:5 Hz:12", help="clock scan F1:F2:COUNT (time shared evenly)")
    sp.add_argument("--snr", default="1")
    against_args(sp, f"references (default: {' '.join(DEFAULT_AGAINST)})")
    sp.set_defaults(func=cmd_background)


def cmd_plot(args):
    from pathlib import Path

    from .figspec import load_spec, render_spec, save_spec_figure
    from .tables import check_output_path
    spec, digest = load_spec(args.spec)
    out = args.out or spec.out
    if not out:
        out = str(Path(args.spec).with_suffix(".pdf"))
    elif not args.out:
        out = str(Path(args.spec).parent / out)
    check_output_path(out, (".png", ".pdf", ".svg"))
    fig, artists, prov = render_spec(spec, base_dir=Path(args.spec).parent)
    save_spec_figure(fig, out, spec, digest, prov)
    print(f"wrote figure {out} ({len(artists['curves'])} curves)")
    return 0


def cmd_report(args):
    from .mission import load_mission
    from .report import build_report
    mission, digest = load_mission(args.mission)
    md, html = build_report(mission, digest, args.out)
    print(f"wrote {md} and {html}")
    return 0


def add_output_commands(sub, mission_arg):
    sp = sub.add_parser("plot", help="draw a figure from a figure specification (TOML)")
    sp.add_argument("spec", help="figure specification file")
    sp.add_argument("--out", help="output file (.pdf, .svg or .png); default from the spec")
    sp.set_defaults(func=cmd_plot)
    sp = sub.add_parser("report", help="concept-document report (Markdown and self-contained HTML)")
    mission_arg(sp)
    sp.add_argument("--out", required=True, help="output folder (created if its parent exists)")
    sp.set_defaults(func=cmd_report)
