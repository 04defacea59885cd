"""Command-line commands about references, sources, SNR, horizons and backgrounds."""

from __future__ import annotations

import difflib
from pathlib import Path

import numpy as np
from astropy.table import Table

from ..astro.references import CONFUSION_PARAMETERS, DEFAULT_COMPARISON, REFERENCES, TABULATED_ONLY, user_curve
from ..astro.sources import MARKS, MASS_RANGE, Z_LIMIT, Inspiral, Monochromatic, check_source_distance, check_source_mass, load_sources
from ..config.mission import load_mission
from ..constants import MPC, MSUN, YEAR
from ..engine import envelope
from ..errors import InputError
from ..outputs.latex import Raw, astropy_latex, escape, latex_provenance
from ..outputs.plotting import plot_lines
from ..outputs.tables import Column, provenance, reference_table, snr_table, track_table
from ..quantities import checked_frequency
from ..studies import background as bg
from ..studies.horizon import MEASURE_LABELS, MEASURES, Z_MAX, horizon
from ..studies.snr import SCHEDULES, TunedCurve, clock_snr, reference_snr
from .common import (
    check_outputs,
    check_reach,
    frequency,
    grid,
    grid_args,
    latex_arg,
    mission_arg,
    number,
    output_args,
    quantity,
    save_latex,
    save_plot,
    save_table,
    tuned,
)

__all__ = ["add_commands"]

DEFAULT_MASSES = [10, 30, 100, 300, 1e3, 3e3, 1e4, 3e4, 1e5, 3e5, 1e6]


def _references(names, confusion=None, field="--against"):
    out = []
    for name in names:
        if name.lower() in REFERENCES:
            ref = REFERENCES[name.lower()]
            out.append((ref, ref.options_for(confusion)))
        elif Path(name).suffix.lower() in (".csv", ".ecsv"):
            out.append((user_curve(name), {}))
        elif Path(name).suffix.lower() == ".toml":
            raise InputError("a mission file after --against is taken as a reference; give the mission before "
                             "--against", source="command line", field=field, value=name)
        else:
            close = difflib.get_close_matches(name.lower(), list(REFERENCES), n=1)
            hint = f"did you mean {close[0]!r}? " if close else ""
            raise InputError(f"unknown reference; {hint}expected one of {', '.join(REFERENCES)} or a .csv/.ecsv "
                             "curve file", source="command line", field=field, value=name)
    return out


def _confusion(args):
    if getattr(args, "confusion", None) is None:
        return None
    years = number(args.confusion, "--confusion")
    if years not in CONFUSION_PARAMETERS:
        raise InputError(f"expected one of {', '.join(f'{k:g}' for k in CONFUSION_PARAMETERS)} (years)",
                         source="command line", field="--confusion", value=args.confusion)
    return years



def _mass(text, option):
    """A component mass in solar masses from the command line, inside the range sources may have."""
    m = quantity(text, "solMass", option)
    try:
        return check_source_mass(m)
    except ValueError as exc:
        raise InputError(str(exc), source="command line", field=option, value=text) from None


def _total_mass(text):
    """An equal-mass binary's total mass in solar masses (``--masses``)."""
    m = quantity(text, "solMass", "--masses")
    if not 2 * MASS_RANGE[0] <= m <= 2 * MASS_RANGE[1]:
        raise InputError(f"expected a total mass from {2 * MASS_RANGE[0]:g} to {2 * MASS_RANGE[1]:g} solar masses",
                         source="command line", field="--masses", value=text)
    return m

def _source_from_args(args):
    if getattr(args, "source", None):
        return load_sources(args.source)
    if args.frequency is not None:
        if args.h0 is None:
            raise InputError("a monochromatic source needs --h0 with --frequency", source="command line", field="--h0")
        return [Monochromatic("monochromatic", quantity(args.frequency, "Hz", "--frequency"), number(args.h0, "--h0"))]
    if args.mass1 is None or args.mass2 is None:
        raise InputError("give --source FILE, or --mass1 and --mass2 with --distance or --redshift, "
                         "or --frequency with --h0", source="command line")
    m1, m2 = (_mass(args.mass1, "--mass1"), _mass(args.mass2, "--mass2"))
    if (args.distance is None) == (args.redshift is None):
        raise InputError("give exactly one of --distance and --redshift", source="command line")
    if args.distance is not None:
        try:
            d = check_source_distance(quantity(args.distance, "m", "--distance"))
        except ValueError as exc:
            raise InputError(str(exc), source="command line", field="--distance", value=args.distance) from None
        return [Inspiral.from_masses(m1, m2, distance=d, name=f"{m1:g}+{m2:g} Msun at {d / MPC:.4g} Mpc")]
    z = number(args.redshift, "--redshift")
    if not 0 < z <= Z_LIMIT:
        raise InputError(f"expected a redshift above 0 and up to {Z_LIMIT:g}", source="command line",
                         field="--redshift", value=args.redshift)
    return [Inspiral.from_masses(m1, m2, redshift=z, name=f"{m1:g}+{m2:g} Msun at z = {z:g}")]


def cmd_references(args):
    for r in REFERENCES.values():
        print(f"{r.key:7s} {r.label}  [{r.convention}; x{r.sky_factor:.4g} to sky average; "
              f"{r.band[0]:g}-{r.band[1]:g} Hz]")
        print(f"        {r.source}")
        print(f"        {r.channels} channel{'s' if r.channels != 1 else ''}: {r.channels_source}")
        if r.note:
            print(f"        {r.note}")
        if not r.checked:
            print("        (coefficients not yet checked against the paper's text)")
    for name, text in TABULATED_ONLY.items():
        print(f"{'-':7s} {name}: no accepted analytic form; {text}")
    print("user curves: any .csv/.ecsv with 'frequency' and 'asd' or 'psd' and a declared 'convention'")
    return 0


def cmd_reference(args):
    (ref, opts), = _references([args.name], _confusion(args), field="NAME")
    # a published fit holds in its band only: the grid defaults to it and may not leave it
    args.fmin = args.fmin or f"{ref.band[0]!r} Hz"
    args.fmax = args.fmax or f"{ref.band[1]!r} Hz"
    f = grid(args)
    if f[0] < ref.band[0] * (1 - 1e-12) or f[-1] > ref.band[1] * (1 + 1e-12):
        raise InputError(f"the {ref.label} curve holds from {ref.band[0]:g} Hz to {ref.band[1]:g} Hz only; "
                         "choose --fmin and --fmax inside that band", source="command line", field="--fmin/--fmax")
    check_outputs(args)
    if args.convention == "native":
        psd, conv = ref.native(f, **opts), ref.convention
    else:
        psd, conv = ref.sky_averaged(f, **opts), "sky-averaged"
    t = reference_table(ref, f, psd, conv, opts)
    print(f"{ref.label}: {conv}; {ref.source}")
    if args.table:
        save_table(t, args.table)
    if args.plot:
        save_plot(args.plot, lambda ax: plot_lines([(f"{ref.label} ({conv})", f, np.sqrt(psd))], ax=ax,
                                                 ylabel=r"strain ASD [Hz$^{-1/2}$]"), ref.label)
    return 0


def cmd_track(args):
    (src,) = _source_from_args(args)
    fmin, fmax = frequency(args.fmin, "--fmin"), frequency(args.fmax, "--fmax")
    if fmin >= fmax:
        raise InputError("--fmin must be below --fmax", source="command line")
    if not 2 <= args.points <= 1_000_000:
        raise InputError("expected between 2 and 1e6 points", source="command line", field="--points", value=args.points)
    check_outputs(args)
    try:
        tau, f, hc = src.track(fmin, fmax, args.points)
    except ValueError as exc:
        raise InputError(str(exc), source="command line") from None
    t = track_table(src, tau, f, hc)
    print(f"{src.name}: z = {src.redshift:.4g}, detector-frame chirp mass "
          f"{src.chirp_mass / MSUN:.5g} Msun, last stable orbit at {src.isco_frequency:.4g} Hz")
    marks = []
    for label, before in MARKS.items():
        fm = float(src.frequency_at(before))
        print(f"  {label:8s} before merger: {fm:.5g} Hz")
        if f[0] <= fm <= f[-1]:
            marks.append((label, fm, float(src.characteristic_strain(fm))))
    if args.table:
        save_table(t, args.table)
    if args.plot:
        save_plot(args.plot, lambda ax: plot_lines([(src.name, f, hc)], ax=ax, ylabel="characteristic strain $h_c$",
                                                 marks=marks), f"{src.name}: track")
    return 0


def _clock(args):
    mission, digest = load_mission(args.mission)
    return mission, digest, TunedCurve(mission.design())


def cmd_snr(args):
    mission, digest, curve = _clock(args)
    sources = _source_from_args(args)
    refs = _references(args.against or [], _confusion(args))
    T = quantity(args.observation, "s", "--observation") if args.observation else mission.design().duration
    if args.tune and args.schedule != "fixed":
        raise InputError(f"--tune sets the fixed schedule's tuning; it has no meaning with --schedule {args.schedule}",
                         source="command line", field="--tune", value=args.tune)
    tune = tuned(mission, args.tune)[1] if args.tune else None
    cadence = quantity(args.cadence, "s", "--cadence")
    overhead = quantity(args.overhead, "s", "--overhead", positive=False)
    check_outputs(args)
    for src in sources:
        if isinstance(src, Monochromatic):
            check_reach(mission.design(), src.frequency, f"the frequency of {src.name}", args.frequency)
    rows = []
    for src in sources:
        try:
            rows.append(clock_snr(curve, src, args.schedule, T, tune, cadence, overhead))
        except ValueError as exc:
            raise InputError(str(exc), source="command line") from None
        for ref, opts in refs:
            rows.append(reference_snr(ref, src, None, opts))
    _say_observing_times(mission, T, refs)
    print(f"{'detector':32s} {'source':30s} {'schedule':9s} {'SNR':>10s}  band observed")
    for r in rows:
        band = f"{r.f_start:.3g}-{r.f_end:.3g} Hz" if np.isfinite(r.f_start) else "-"
        print(f"{r.detector[:32]:32s} {r.source[:30]:30s} {r.schedule:9s} {r.snr:10.4g}  {band}  {r.note}")
    t = snr_table(rows, mission.name, digest)
    t.meta.update(cadence_s=cadence, overhead_s=overhead, observation_s=T)
    if args.table:
        save_table(t, args.table)
    if args.latex:
        caption = (f"SNR of each source in {mission.name} (clock schedule {args.schedule}; retuning every "
                   f"{cadence:g} s with {overhead:g} s lost each time) and in the reference detectors, sky-, "
                   f"polarisation- and inclination-averaged, over {T / YEAR:.3g} yr unless noted.")
        titles = {"snr": "SNR", "f_start": "from", "f_end": "to", "observed": "observed"}
        save_latex(astropy_latex(t, caption, "tab:snr", latex_provenance(mission.name, digest), skip=("note",),
                                 titles=titles), args.latex)
    return 0


def cmd_horizon(args):
    mission, digest, curve = _clock(args)
    masses = [_total_mass(m) for m in (args.masses or DEFAULT_MASSES)]
    thr = number(args.snr, "--snr", lo=1e-6)
    refs = _references(args.against if args.against is not None else DEFAULT_COMPARISON, _confusion(args))
    T = mission.design().duration
    check_outputs(args)
    detectors = [("clock", mission.name, "link", lambda s: clock_snr(curve, s, args.schedule, T).snr)]
    for ref, opts in refs:
        detectors.append((ref.key.replace("-", "_"), ref.network_label, ref.pattern,
                          lambda s, ref=ref, opts=opts: reference_snr(ref, s, None, opts).snr))
    t = Table()
    t["total_mass"] = Column(masses, unit="solMass")
    print(f"{MEASURE_LABELS[args.measure]} at SNR {thr:g} (equal masses, Planck18; clock schedule '{args.schedule}')")
    _say_observing_times(mission, T, refs)
    series = []
    for key, label, pattern, fn in detectors:
        zs, ds = zip(*[horizon(fn, m, thr, args.measure, pattern) for m in masses])
        t[f"z_{key}"] = Column(zs)
        t[f"distance_{key}"] = Column(np.array(ds) / MPC, unit="Mpc")
        print(f"  {label}: " + ", ".join(f"{m:g} Msun: {_reach(z)}" for m, z in zip(masses, zs)))
        series.append((label, np.array(masses), np.array(zs)))
    t.meta.update(provenance(mission.name, digest))
    t.meta.update(snr_threshold=thr, observation_s=T, clock_schedule=args.schedule, measure=args.measure,
                  measure_note=MEASURE_LABELS[args.measure],
                  reference_observation_s={r.key: r.observation for r, _ in refs},
                  reference_channels={r.key: r.channels for r, _ in refs},
                  note=f"0 means below threshold at any distance; inf means beyond z = {Z_MAX:g}")
    if args.table:
        save_table(t, args.table)
    if args.latex:
        measure = MEASURE_LABELS[args.measure]
        caption = Raw(f"{escape(measure[:1].upper() + measure[1:])} at SNR {thr:g} of equal-mass binaries (source-frame "
                      f"total mass; Planck18 cosmology) for {escape(mission.name)} (clock schedule {args.schedule}) "
                      f"and the reference detectors (the table file holds the luminosity distances too); 0 means below "
                      f"threshold at any distance, $\\infty$ beyond $z = {Z_MAX:g}$.")
        keys = [key for key, *_ in detectors]
        short = {k: label.split(" (")[0].split(",")[0] for k, label, *_ in detectors}  # "LISA, 2 channels": LISA
        titles = {"total_mass": "total mass", **{f"z_{k}": short[k] for k in keys}}
        groups = [("horizon redshift z", 1, len(keys))]
        save_latex(astropy_latex(t, caption, "tab:horizon", latex_provenance(mission.name, digest), titles=titles,
                                 skip=[f"distance_{k}" for k in keys], groups=groups), args.latex)
    if args.plot:
        save_plot(args.plot, lambda ax: plot_lines([(lab, x, np.where(np.isfinite(y), y, np.nan)) for lab, x, y in series],
                                                 ax=ax, xlabel=r"total mass [$M_\odot$] (source frame)",
                                                 ylabel="horizon redshift"),
                  f"{mission.name}: {args.measure} horizon at SNR {thr:g}")
    return 0


def cmd_background(args):
    mission, digest = load_mission(args.mission)
    design = mission.design()
    f = grid(args)
    refs = _references(args.against if args.against is not None else DEFAULT_COMPARISON, _confusion(args))
    T = design.duration
    thr = number(args.snr, "--snr", lo=1e-6)
    lo, hi, steps = _scan(args.scan)
    check_outputs(args)
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
        sn = ref.network(f, **opts)
        t[f"omega_n_{key}"] = Column(bg.omega_noise(f, sn, h0))
        inband = (f >= ref.band[0]) & (f <= ref.band[1])
        if inband.sum() >= 2:
            pif = bg.power_law_integrated(f[inband], sn[inband], ref.observation, thr, h0=h0)
            t[f"omega_pi_{key}"] = Column(_extend(f, pif, inband))
            series.append((f"{ref.network_label}: power-law integrated", f[inband], pif))
    t.meta.update(provenance(mission.name, digest))
    t.meta.update(snr_threshold=thr, observation_s=T, H0_per_s=h0, scan=f"{lo:g} Hz to {hi:g} Hz in {steps} tunings",
                  assumption=bg.SCAN_ASSUMPTION,
                  convention="Omega_n = 4 pi^2 f^3 S_n / (3 H0^2) for sky-averaged S_n; references: S_n / channels "
                             "(SNR^2 summed over a detector's channels), known-noise single detector (Thrane & "
                             "Romano 2013); PI columns are NaN outside each band")
    print(bg.SCAN_ASSUMPTION)
    i = int(np.argmin(np.where(inscan, pi, np.inf)))
    print(f"clock: best power-law integrated Omega {pi[i]:.3g} at {f[i]:.3g} Hz (SNR {thr:g}, {T / YEAR:.3g} yr)")
    if args.table:
        save_table(t, args.table)
    if args.plot:
        save_plot(args.plot, lambda ax: plot_lines(series, ax=ax, ylabel=r"$\Omega_{\rm gw}$ (power-law integrated)"),
                f"{mission.name}: stochastic background sensitivity")
    return 0


def _say_observing_times(mission, T, refs):
    """Each detector observes for its own time: say which."""
    print(f"observing time: {mission.name} {T / YEAR:.3g} yr")
    for r, _ in refs:
        print(f"  {r.label}: {r.observation / YEAR:.3g} yr, {r.observation_source}")


def _extend(f, values, mask):
    out = np.full(f.shape, np.nan)
    out[mask] = values
    return out


def _scan(text):
    parts = (text or "").split(":")
    try:
        lo, hi, steps = checked_frequency(parts[0]), checked_frequency(parts[1]), int(parts[2])
    except (IndexError, ValueError):
        raise InputError("expected F1:F2:COUNT, e.g. '5 mHz:5 Hz:12'", source="command line", field="--scan", value=text) from None
    if not (0 < lo < hi) or not 1 <= steps <= 10_000:
        raise InputError("expected 0 < F1 < F2 and 1 <= COUNT <= 10000", source="command line", field="--scan",
                         value=text)
    return lo, hi, steps


def against_args(sp, help_text):
    sp.add_argument("--against", nargs="*", help=help_text)
    sp.add_argument("--confusion", help="add LISA's galactic confusion for 0.5, 1, 2 or 4 years")


def _reach(z):
    """A horizon redshift as printed: 0 and inf are the ends of the searched range."""
    if z == 0:
        return "not reached"
    if not np.isfinite(z):
        return f"beyond z = {Z_MAX:g}"
    return f"z={z:.3g}"


def add_commands(sub):
    sp = sub.add_parser("references", help="list the reference detectors with their sources and conventions")
    sp.set_defaults(func=cmd_references)

    sp = sub.add_parser("reference", help="export one reference detector curve")
    sp.add_argument("name", help="lisa, aligo, et, decigo, or a .csv/.ecsv curve file")
    sp.add_argument("--convention", choices=("native", "sky-averaged"), default="native",
                    help="as published (default) or converted to the sky average")
    sp.add_argument("--confusion", help="LISA galactic confusion for 0.5, 1, 2 or 4 years (default: off)")
    grid_args(sp, span_help="the detector's valid band")
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
        sp.add_argument("--schedule", choices=SCHEDULES, default="track",
                        help="clock schedule: one fixed tuning, retuned along the track, or the best of both")

    sp = sub.add_parser("track", help="frequency and characteristic-strain track of an inspiral")
    source_args(sp)
    sp.add_argument("--fmin", default="1e-5 Hz")
    sp.add_argument("--fmax", default="1e4 Hz")
    sp.add_argument("--points", type=int, default=300)
    output_args(sp)
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
    output_args(sp, plot=False)
    latex_arg(sp, "the SNR table")
    sp.set_defaults(func=cmd_snr)

    sp = sub.add_parser("horizon", help="redshift and distance reached at an SNR, versus total mass")
    mission_arg(sp)
    sp.add_argument("--snr", default="8")
    sp.add_argument("--masses", nargs="+", help="source-frame total masses (solar masses)")
    sp.add_argument("--measure", choices=MEASURES, default="sky-averaged",
                    help="sky-averaged distance (default), optimal-orientation horizon or range")
    schedule_arg(sp)
    against_args(sp, f"references (default: {' '.join(DEFAULT_COMPARISON)})")
    output_args(sp)
    latex_arg(sp, "the horizon table")
    sp.set_defaults(func=cmd_horizon)

    sp = sub.add_parser("background", help="stochastic-background sensitivity (Omega_gw)")
    mission_arg(sp)
    grid_args(sp)
    sp.add_argument("--scan", default="5 mHz:5 Hz:12", help="clock scan F1:F2:COUNT (time shared evenly)")
    sp.add_argument("--snr", default="1")
    against_args(sp, f"references (default: {' '.join(DEFAULT_COMPARISON)})")
    sp.set_defaults(func=cmd_background)


