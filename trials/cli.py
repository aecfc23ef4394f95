"""The ``trials`` command line: argument parsing and printing only.

Every command takes ``--json`` (anywhere after its name) and then prints one JSON object
and nothing else on stdout. Input errors go to stderr with exit status 2. The work is
done by ``trials.stats``, ``trials.design`` and ``trials.service``; this module only
translates arguments into calls and results into text.
"""

from __future__ import annotations

import argparse
import json
import os
import sys
import warnings
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any

from trials import limits
from trials.errors import TrialsError
from trials.methods import CATA, FORCED_CHOICE, METHODS, RATING, SIGNAL_DETECTION, get_method

Handler = Callable[[argparse.Namespace], dict[str, Any]]


# ---------------------------------------------------------------- helpers


def _fraction(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a number, got {text!r}") from None
    return value


def _count(text: str) -> int:
    try:
        return int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a whole number, got {text!r}") from None


# the largest value each argument takes (trials.limits); smaller bad values are left to
# the functions, whose messages say what is expected
_MOST = {
    "n": (limits.MAX_N, "--n"), "correct": (limits.MAX_N, "--correct"),
    "panelists": (limits.MAX_PANELISTS, "--panelists"),
    "samples": (limits.MAX_SAMPLES, "--samples"),
    "per_panelist": (limits.MAX_SAMPLES, "--per-panelist"),
    "count": (limits.MAX_CODES, "--count"), "port": (limits.MAX_PORT, "--port"),
    "id": (2**31 - 1, "the trial id"), "trial": (2**31 - 1, "--trial"),
    "boot": (limits.MAX_BOOT, "--boot"),
    "hits": (limits.MAX_N, "--hits"), "signal": (limits.MAX_N, "--signal"),
    "false_alarms": (limits.MAX_N, "--false-alarms"), "noise": (limits.MAX_N, "--noise"),
}


def _check_limits(args: argparse.Namespace) -> None:
    """Refuse at once a request past the documented limits (trials.limits)."""
    for dest, (most, what) in _MOST.items():
        value = getattr(args, dest, None)
        if isinstance(value, int) and value > most:
            shown = (str(value) if len(str(value)) <= 20
                     else f"{str(value)[:12]}... ({len(str(value))} digits)")
            raise TrialsError(f"{what} may be at most {most:,}; got {shown}")
    for dest in ("alpha", "beta"):
        value = getattr(args, dest, None)
        if isinstance(value, float) and 0 < value < limits.MIN_ALPHA:
            raise TrialsError(f"--{dest} may be no smaller than {limits.MIN_ALPHA:g}; "
                              f"got {value!r}")


def _seed(args: argparse.Namespace) -> int | None:
    return args.seed


def _store(args: argparse.Namespace):
    from trials import service

    return service.open_store(args.db)


def _read_csv(path: str, numbers: Sequence[str] = ()):
    from trials.tabular import read_table

    return read_table(path, numbers=numbers)


# ---------------------------------------------------------------- handlers: statistics


def _critical(args: argparse.Namespace) -> dict[str, Any]:
    from trials.stats.discrimination import critical_value

    return critical_value(args.n, method=args.method, alpha=args.alpha).to_dict()


def _difference(args: argparse.Namespace) -> dict[str, Any]:
    from trials.stats.discrimination import difference_test

    return difference_test(
        args.correct, args.n, method=args.method, alpha=args.alpha, level=args.level
    ).to_dict()


def _similarity(args: argparse.Namespace) -> dict[str, Any]:
    from trials.stats.discrimination import similarity_test

    return similarity_test(
        args.correct, args.n, method=args.method, pd=args.pd, beta=args.beta
    ).to_dict()


def _plan(args: argparse.Namespace) -> dict[str, Any]:
    if args.method == RATING:
        return _plan_rating(args)
    if args.pd is None:
        raise TrialsError(f"--pd is required for {args.method}")
    from trials.stats.power import panel_size

    return panel_size(args.pd, method=args.method, alpha=args.alpha, beta=args.beta).to_dict()


def _plan_rating(args: argparse.Namespace) -> dict[str, Any]:
    from trials.stats.power import rating_error_sd, rating_panel_size

    if args.delta is None or args.samples is None:
        raise TrialsError("a rating plan needs --delta (scale points) and --samples")
    sd, source = args.sd, "given"
    if (sd is None) == (args.trial is None):
        raise TrialsError("give exactly one of --sd or --trial (with --attribute)")
    if sd is None:
        if not args.attribute:
            raise TrialsError("--trial needs --attribute: whose error to read")
        from trials import service

        at = service.analyse_trial(_store(args), args.trial).attribute(args.attribute)
        if at.anova is None:
            raise TrialsError(f"trial {args.trial}: no analysis of variance for "
                              f"{args.attribute!r} yet")
        err = rating_error_sd(at.anova)
        sd, source = err.sd, f"{err.source}: trial {args.trial}, {args.attribute}"
    return rating_panel_size(args.delta, sd=sd, samples=args.samples, alpha=args.alpha,
                             beta=args.beta, design=args.design, sd_source=source).to_dict()


def _dprime(args: argparse.Namespace) -> dict[str, Any]:
    from trials.stats.thurstonian import dprime_conversion

    if (args.pc is None) == (args.dprime is None):
        raise TrialsError("give exactly one of --pc or --dprime")
    return dprime_conversion(method=args.method, pc=args.pc, dprime=args.dprime).to_dict()


def _analyze_ratings(args: argparse.Namespace) -> dict[str, Any]:
    from trials.stats.ratings import rating_anova

    data = _read_csv(args.file, numbers=(args.score,))
    return rating_anova(
        data,
        score=args.score,
        sample=args.sample,
        panelist=args.panelist,
        replicate=args.replicate,
        alpha=args.alpha,
    ).to_dict()


def _analyze_profile(args: argparse.Namespace) -> dict[str, Any]:
    from trials.stats.profile import descriptive_profile

    data = _read_csv(args.file, numbers=(args.score,))
    return descriptive_profile(
        data, score=args.score, sample=args.sample, panelist=args.panelist,
        attribute=args.attribute, replicate=args.replicate, alpha=args.alpha,
        n_boot=args.boot, rng=args.seed,
    ).to_dict()


def _analyze_ranks(args: argparse.Namespace) -> dict[str, Any]:
    from trials.stats.ranks import rank_test

    data = _read_csv(args.file)
    return rank_test(
        data, rank=args.rank, sample=args.sample, panelist=args.panelist, alpha=args.alpha
    ).to_dict()


def _analyze_rindex(args: argparse.Namespace) -> dict[str, Any]:
    from trials.stats.rindex import r_index_table

    data = _read_csv(args.file, numbers=(args.score,))
    return r_index_table(data, score=args.score, sample=args.sample, control=args.control,
                         kind=args.kind, alpha=args.alpha).to_dict()


def _analyze_cata(args: argparse.Namespace) -> dict[str, Any]:
    import pandas as pd

    from trials.stats.cata import correspondence_analysis, penalty_lift, word_tests

    data = _read_csv(args.file, numbers=(args.tick,) + ((args.liking,) if args.liking else ()))
    frame = data.rename(columns={args.panelist: "panelist", args.sample: "sample",
                                 args.word: "word", args.tick: "tick"})
    tests = word_tests(frame, alpha=args.alpha)
    table = pd.pivot_table(frame, index="sample", columns="word", values="tick",
                           aggfunc="sum", sort=False)
    out: dict[str, Any] = {"words": [t.to_dict() for t in tests],
                           "correspondence": correspondence_analysis(table).to_dict()}
    if args.liking:
        lifts = penalty_lift(frame.rename(columns={args.liking: "liking"}))
        out["penalty_lift"] = [x.to_dict() for x in lifts]
    return out


def _analyze_table(args: argparse.Namespace) -> dict[str, Any]:
    from trials.stats.signal import signal_test

    model = get_method(args.method).model
    return signal_test(args.hits, args.signal, args.false_alarms, args.noise,
                       method=args.method, model=model, alpha=args.alpha,
                       level=args.level).to_dict()


# ---------------------------------------------------------------- handlers: designs


def _design_codes(args: argparse.Namespace) -> dict[str, Any]:
    from trials.design.codes import blinding_codes

    return blinding_codes(args.count, rng=_seed(args)).to_dict()


def _design_williams(args: argparse.Namespace) -> dict[str, Any]:
    from trials.design.williams import williams_design

    return williams_design(args.samples, panelists=args.panelists, rng=_seed(args)).to_dict()


def _design_sets(args: argparse.Namespace) -> dict[str, Any]:
    from trials.design.sets import discrimination_sets

    return discrimination_sets(args.method, args.panelists, rng=_seed(args)).to_dict()


def _design_blocks(args: argparse.Namespace) -> dict[str, Any]:
    from trials.design.blocks import incomplete_blocks

    return incomplete_blocks(
        args.samples, args.per_panelist, panelists=args.panelists, rng=_seed(args)
    ).to_dict()


# ---------------------------------------------------------------- handlers: the store


def _study_list(args: argparse.Namespace) -> dict[str, Any]:
    from trials import service

    return {"studies": [s.to_dict() for s in service.list_trials(_store(args))]}


def _study_show(args: argparse.Namespace) -> dict[str, Any]:
    from trials import service

    return {"study": service.trial_overview(_store(args), args.id).to_dict()}


def _import_answers(args: argparse.Namespace) -> dict[str, Any]:
    from trials import service

    done = service.import_answer_file(_store(args), args.trial, Path(args.file))
    return {"imported": done.added, "already_on_record": done.already,
            "message": done.message()}


def _export_answers(args: argparse.Namespace) -> dict[str, Any]:
    from trials import service

    out = Path(args.out)
    rows = service.export_answers(_store(args), args.trial, out, fmt=args.format)
    return {"rows": rows, "path": str(out)}


def _print(args: argparse.Namespace) -> dict[str, Any]:
    from trials import service

    out = Path(args.out)
    base_url = args.base_url or os.environ.get("TRIALS_BASE_URL", "")
    pages = service.print_document(_store(args), args.trial, args.kind, out, base_url=base_url)
    return {"pages": pages, "path": str(out)}


def _report(args: argparse.Namespace) -> dict[str, Any]:
    from trials import service

    out = Path(args.out)
    decision = service.write_report(_store(args), args.trial, out)
    return {"decision": decision, "path": str(out)}


def _demo(args: argparse.Namespace) -> dict[str, Any]:
    from trials.demo import seed_demo

    return {"studies": [s.to_dict() for s in seed_demo(_store(args))]}


def _passcode_is_set() -> bool:
    """A leader passcode in TRIALS_PASSCODE or in .streamlit/secrets.toml (as the app
    reads it, see trials.ui.configured_passcode)."""
    if os.environ.get("TRIALS_PASSCODE"):
        return True
    import tomllib

    secrets = Path(".streamlit") / "secrets.toml"
    try:
        data = tomllib.loads(secrets.read_text(encoding="utf-8"))
    except (OSError, tomllib.TOMLDecodeError):
        return False
    return bool(data.get("leader_passcode") or data.get("TRIALS_PASSCODE"))


LOCAL_HOST = "127.0.0.1"
LOCAL_HOSTS = (LOCAL_HOST, "localhost", "::1")


def app_command(port: int | None = None, host: str | None = None) -> list[str]:
    """The ``streamlit run`` command line that serves the app, through
    :func:`trials.ui.serve` (the screens' modules imported before the server starts)."""
    entry = Path(__file__).with_name("app.py")
    cmd = [sys.executable, "-c", "from trials.ui import serve; serve()", "run", str(entry)]
    cmd += ["--browser.gatherUsageStats", "false"]
    cmd += ["--client.toolbarMode", "minimal"]  # no developer menu on kitchen tablets
    if not os.environ.get("DISPLAY") or os.environ.get("CI"):
        cmd += ["--server.headless", "true"]
    if port:
        cmd += ["--server.port", str(port)]
    if host:
        cmd += ["--server.address", host]
    return cmd


def _app(args: argparse.Namespace) -> dict[str, Any]:
    from trials import service
    from trials.demo import seed_demo

    host = args.host or LOCAL_HOST
    if host not in LOCAL_HOSTS and not _passcode_is_set() and not args.open:
        raise TrialsError(
            f"--host {host} serves the app to the network, but no leader passcode is set: "
            "set TRIALS_PASSCODE first (or pass --no-passcode to serve the leader screens "
            "to anyone who can reach this address)"
        )
    store = service.open_store(args.db)
    if args.demo and not service.list_trials(store):
        seed_demo(store)
    store.close()
    env = dict(os.environ)
    if args.db:
        env["TRIALS_DB"] = args.db
    cmd = app_command(args.port, host)
    # exec: the server takes this process's place, so a signal sent to it (kill, Ctrl-C)
    # reaches Streamlit itself and no child is left holding the port
    sys.stdout.flush()
    os.execvpe(cmd[0], cmd, env)
    return {"exit": 1}  # not reached


# ---------------------------------------------------------------- recipe experiments


def _factor_arg(text: str) -> dict[str, Any]:
    """``NAME:UNIT:LOW:HIGH[:SAFE_LOW:SAFE_HIGH]``; LOW may list levels (``40,50,60``,
    then HIGH is left empty)."""
    parts = text.split(":")
    if len(parts) not in (4, 6):
        raise TrialsError(f"--factor {text!r}: expected NAME:UNIT:LOW:HIGH or "
                          "NAME:UNIT:LOW:HIGH:SAFE_LOW:SAFE_HIGH")
    try:
        nums = [float(p) if p.strip() else None for p in parts[3:]]
        levels = [float(v) for v in parts[2].split(",")] if "," in parts[2] else []
        low = None if levels else float(parts[2])
    except ValueError:
        raise TrialsError(f"--factor {text!r}: low, high and the safe range are numbers") from None
    out: dict[str, Any] = {"name": parts[0], "unit": parts[1], "low": low, "high": nums[0],
                           "levels": levels}
    if len(nums) == 3:
        out["safe_low"], out["safe_high"] = nums[1], nums[2]
    return out


def _goal_arg(text: str) -> dict[str, Any]:
    """``RESPONSE:KIND:LOW:HIGH[:TARGET]``, e.g. ``overall liking:maximize:7:9``."""
    parts = text.split(":")
    if len(parts) not in (4, 5):
        raise TrialsError(f"--goal {text!r}: expected RESPONSE:KIND:LOW:HIGH[:TARGET]")
    try:
        nums = [float(p) for p in parts[2:]]
    except ValueError:
        raise TrialsError(f"--goal {text!r}: low, high and target are numbers") from None
    return {"response": parts[0], "kind": parts[1], "low": nums[0], "high": nums[1],
            "target": nums[2] if len(nums) == 3 else None}


def _experiment_design(args: argparse.Namespace) -> dict[str, Any]:
    from trials import service

    factors = [_factor_arg(f) for f in args.factor]
    options = dict(center_points=args.center, blocks=args.blocks, resolution=args.resolution,
                   generators=args.generators, seed=args.seed)
    plan = service.design_experiment(args.kind, factors, **options)
    out = plan.to_dict()
    out["label"] = plan.label
    out["caution"] = service.FOOD_CODE_CAUTION
    if args.save:
        store = _store(args)
        exp = service.create_experiment(store, name=args.save, kind=args.kind, factors=factors,
                                        allergens=args.allergens or "", **options)
        out["experiment"], out["trial"] = exp.id, exp.trial_id
        out["runs"] = [r.to_dict() for r in exp.runs]
    return out


def _experiment_analyze(args: argparse.Namespace) -> dict[str, Any]:
    from trials import service

    analysis = service.analyse_experiment(_store(args), args.id,
                                          goals=[_goal_arg(g) for g in args.goal])
    out = analysis.to_dict()
    out.pop("table")
    out["runs"] = analysis.frame().to_dict("records")
    return out


# ---------------------------------------------------------------- the parser


def _add_json(p: argparse.ArgumentParser) -> None:
    p.add_argument("--json", action="store_true", help="print one JSON object and nothing else")


def _add_db(p: argparse.ArgumentParser) -> None:
    p.add_argument(
        "--db",
        default=None,
        help="SQLAlchemy URL of the store (default: $TRIALS_DB, else sqlite:///trials.db)",
    )


def _add_seed(p: argparse.ArgumentParser) -> None:
    p.add_argument("--seed", type=_count, default=None, help="seed, for a plan you can redraw")


def _add_trial(p: argparse.ArgumentParser) -> None:
    p.add_argument("--trial", "--study", dest="trial", required=True, type=_count,
                   metavar="ID", help="the trial's id (--study also works)")


def _leaf(sub, name: str, handler: Handler, help_text: str, *, db: bool = False,
          aliases: Sequence[str] = ()):
    p = sub.add_parser(name, help=help_text, description=help_text, aliases=list(aliases))
    p.set_defaults(handler=handler)
    _add_json(p)
    if db:
        _add_db(p)
    return p


def build_parser() -> argparse.ArgumentParser:
    names = [m.name for m in METHODS]
    parser = argparse.ArgumentParser(
        prog="trials",
        description="Kitchen Trials: plan, serve, collect, analyse and decide blind tastings.",
    )
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")

    p = _leaf(sub, "critical", _critical, "fewest correct answers that conclude a difference")
    p.add_argument("--method", required=True, choices=FORCED_CHOICE)
    p.add_argument("--n", required=True, type=_count)
    p.add_argument("--alpha", type=_fraction, default=0.05)

    p = _leaf(sub, "difference", _difference, "exact test of a difference, with pd and d'")
    p.add_argument("--method", required=True, choices=FORCED_CHOICE)
    p.add_argument("--correct", required=True, type=_count)
    p.add_argument("--n", required=True, type=_count)
    p.add_argument("--alpha", type=_fraction, default=0.05)
    p.add_argument("--level", type=_fraction, default=0.95, help="confidence level")

    p = _leaf(sub, "similarity", _similarity, "similarity test for a largest acceptable pd")
    p.add_argument("--method", required=True, choices=FORCED_CHOICE)
    p.add_argument("--correct", required=True, type=_count)
    p.add_argument("--n", required=True, type=_count)
    p.add_argument("--pd", required=True, type=_fraction)
    p.add_argument("--beta", type=_fraction, default=0.05)

    p = _leaf(sub, "plan", _plan, "fewest panelists for alpha, beta and pd (forced choice) "
              "or for the smallest difference of means (rating)", db=True)
    p.add_argument("--method", required=True, choices=[*FORCED_CHOICE, RATING])
    p.add_argument("--pd", type=_fraction, default=None,
                   help="proportion of discriminators that matters (forced choice)")
    p.add_argument("--alpha", type=_fraction, default=0.05)
    p.add_argument("--beta", type=_fraction, default=0.20)
    p.add_argument("--delta", type=_fraction, default=None,
                   help="rating: smallest difference of two sample means that matters")
    p.add_argument("--samples", type=_count, default=None, help="rating: samples compared")
    p.add_argument("--sd", type=_fraction, default=None,
                   help="rating: error sd of one rating (or read it with --trial)")
    p.add_argument("--trial", "--study", dest="trial", type=_count, default=None,
                   metavar="ID", help="rating: an earlier trial whose error to use")
    p.add_argument("--attribute", default=None, help="rating: that trial's attribute")
    p.add_argument("--design", choices=("blocked", "monadic"), default="blocked",
                   help="rating: every panelist rates every sample (blocked) or one each")

    p = _leaf(sub, "dprime", _dprime, "convert proportion correct to Thurstonian d' or back")
    p.add_argument("--method", required=True, choices=FORCED_CHOICE)
    p.add_argument("--pc", type=_fraction, default=None)
    p.add_argument("--dprime", type=_fraction, default=None)

    design = sub.add_parser("design", help="blinding codes and serving orders")
    dsub = design.add_subparsers(dest="design", required=True, metavar="KIND")
    p = _leaf(dsub, "codes", _design_codes, "unique three-digit blinding codes")
    p.add_argument("--count", required=True, type=_count)
    _add_seed(p)
    p = _leaf(dsub, "williams", _design_williams, "Williams serving orders")
    p.add_argument("--samples", required=True, type=_count)
    p.add_argument("--panelists", type=_count, default=None)
    _add_seed(p)
    p = _leaf(dsub, "sets", _design_sets, "balanced discrimination sets")
    p.add_argument("--method", required=True, choices=FORCED_CHOICE)
    p.add_argument("--panelists", required=True, type=_count)
    _add_seed(p)
    p = _leaf(dsub, "blocks", _design_blocks, "balanced incomplete blocks")
    p.add_argument("--samples", required=True, type=_count)
    p.add_argument("--per-panelist", required=True, type=_count)
    p.add_argument("--panelists", type=_count, default=None)
    _add_seed(p)

    analyze = sub.add_parser("analyze", help="analyse ratings or ranks from a tidy CSV, or a "
                                             "signal-detection response table")
    asub = analyze.add_subparsers(dest="analysis", required=True, metavar="KIND")
    p = _leaf(asub, "ratings", _analyze_ratings, "ANOVA of ratings with panelist blocks")
    p.add_argument("file")
    p.add_argument("--score", default="score")
    p.add_argument("--sample", default="sample")
    p.add_argument("--panelist", default="panelist")
    p.add_argument("--replicate", default=None)
    p.add_argument("--alpha", type=_fraction, default=0.05)
    p = _leaf(asub, "profile", _analyze_profile, (
        "descriptive profile of many intensity attributes: PCA map with bootstrap "
        "ellipses, MANOVA with panelist blocks, panelist departures"
    ))
    p.add_argument("file")
    p.add_argument("--score", default="score")
    p.add_argument("--sample", default="sample")
    p.add_argument("--panelist", default="panelist")
    p.add_argument("--attribute", default="attribute")
    p.add_argument("--replicate", default=None)
    p.add_argument("--alpha", type=_fraction, default=0.05)
    p.add_argument("--boot", type=_count, default=500, help="virtual panels for the ellipses")
    p.add_argument("--seed", type=_count, default=0, help="seed of the panel resampling")
    p = _leaf(asub, "ranks", _analyze_ranks, (
        "rank test with rank-sum comparisons: Friedman (1937) for complete blocks, "
        "Durbin (1951) when each panelist ranked only some samples"
    ))
    p.add_argument("file")
    p.add_argument("--rank", default="rank")
    p.add_argument("--sample", default="sample")
    p.add_argument("--panelist", default="panelist")
    p.add_argument("--alpha", type=_fraction, default=0.05)

    p = _leaf(asub, "rindex", _analyze_rindex, (
        "R-index of each sample against the control from scores or ranks (O'Mahony 1992), "
        "with its Mann-Whitney test"
    ))
    p.add_argument("file")
    p.add_argument("--control", required=True)
    p.add_argument("--score", default="score")
    p.add_argument("--sample", default="sample")
    p.add_argument("--kind", choices=("scores", "ranks"), default="scores")
    p.add_argument("--alpha", type=_fraction, default=0.05)
    p = _leaf(asub, CATA, _analyze_cata, (
        "check-all-that-apply ticks: Cochran's Q per word, pairwise McNemar tests, "
        "correspondence analysis and (with --liking) penalty-lift"
    ))
    p.add_argument("file")
    p.add_argument("--panelist", default="panelist")
    p.add_argument("--sample", default="sample")
    p.add_argument("--word", default="word")
    p.add_argument("--tick", default="tick")
    p.add_argument("--liking", default=None, help="column of the liking score, if any")
    p.add_argument("--alpha", type=_fraction, default=0.05)
    p = _leaf(asub, "table", _analyze_table, (
        "A-not-A or same-different response table: Fisher's exact one-sided test, "
        "Pearson's chi-square, d' and its standard error"
    ))
    p.add_argument("--method", required=True, choices=SIGNAL_DETECTION)
    p.add_argument("--hits", required=True, type=_count,
                   help="signal answers ('not A', 'different') to the signal sets")
    p.add_argument("--signal", required=True, type=_count, help="signal sets answered")
    p.add_argument("--false-alarms", required=True, type=_count,
                   help="signal answers to the noise sets")
    p.add_argument("--noise", required=True, type=_count, help="noise sets answered")
    p.add_argument("--alpha", type=_fraction, default=0.05)
    p.add_argument("--level", type=_fraction, default=0.95, help="confidence level")

    trial = sub.add_parser("trial", aliases=["study"], help="trials on file ('study' also works)")
    tsub = trial.add_subparsers(dest="trial_cmd", required=True, metavar="ACTION")
    _leaf(tsub, "list", _study_list, "list the trials", db=True)
    p = _leaf(tsub, "show", _study_show, "show one trial", db=True)
    p.add_argument("id", type=_count)

    imp = sub.add_parser("import", help="import answers from a file")
    isub = imp.add_subparsers(dest="import_cmd", required=True, metavar="WHAT")
    p = _leaf(isub, "answers", _import_answers, "import answers (all rows or none); "
              "'responses' also works", db=True, aliases=["responses"])
    p.add_argument("file")
    _add_trial(p)

    exp = sub.add_parser("export", help="export answers to a file")
    esub = exp.add_subparsers(dest="export_cmd", required=True, metavar="WHAT")
    p = _leaf(esub, "answers", _export_answers, "export answers with the key; 'responses' "
              "also works", db=True, aliases=["responses"])
    _add_trial(p)
    p.add_argument("--format", choices=("csv", "xlsx"), default="csv")
    p.add_argument("--out", required=True)

    prn = sub.add_parser("print", help="print ballots, the serving sheet or cup labels")
    psub = prn.add_subparsers(dest="kind", required=True, metavar="WHAT")
    for kind, text in (
        ("ballots", "one ballot per panelist and session"),
        ("sheet", "the serving sheet with the decoding key (kitchen only)"),
        ("labels", "cup labels in serving order"),
    ):
        p = _leaf(psub, kind, _print, text, db=True)
        _add_trial(p)
        p.add_argument("--out", required=True)
        p.add_argument(
            "--base-url",
            default=None,
            help="the app's address on the kitchen network, for the ballots' QR codes "
            "(default: $TRIALS_BASE_URL)",
        )

    p = _leaf(sub, "report", _report, "write the trial's report: HTML, or the printable "
              "PDF summary when --out ends in .pdf", db=True)
    _add_trial(p)
    p.add_argument("--out", required=True, help="FILE.html, or FILE.pdf for the summary")

    from trials.design.experiment import KINDS

    expt = sub.add_parser("experiment", help="recipe experiments over process settings")
    xsub = expt.add_subparsers(dest="experiment_cmd", required=True, metavar="ACTION")
    p = _leaf(xsub, "design", _experiment_design, "design runs (store them with --save)",
              db=True)
    p.add_argument("--kind", required=True, choices=KINDS)
    p.add_argument("--factor", action="append", required=True,
                   help="NAME:UNIT:LOW:HIGH[:SAFE_LOW:SAFE_HIGH] (LOW may be levels 40,50,60)")
    p.add_argument("--center", type=_count, default=0, help="centre points")
    p.add_argument("--blocks", type=_count, default=1)
    p.add_argument("--resolution", type=_count, default=None)
    p.add_argument("--generators", default=None, help="fracfact words, e.g. 'a b c abc'")
    p.add_argument("--save", default=None, metavar="NAME",
                   help="store the experiment and its rating trial under this name")
    p.add_argument("--allergens", default=None, help="the product's allergens, comma-separated")
    _add_seed(p)
    p = _leaf(xsub, "analyze", _experiment_analyze, "effects, surfaces and the optimum",
              db=True)
    p.add_argument("id", type=_count)
    p.add_argument("--goal", action="append", default=[],
                   help="RESPONSE:KIND:LOW:HIGH[:TARGET], KIND maximize, minimize or target")

    _leaf(sub, "demo", _demo, "seed the invented demo trials", db=True)

    p = _leaf(sub, "app", _app, "start the Streamlit app", db=True)
    p.add_argument("--port", type=_count, default=None)
    p.add_argument("--host", default=None,
                   help="address to listen on (default 127.0.0.1, this machine only; "
                   "0.0.0.0 for the kitchen network, which needs TRIALS_PASSCODE)")
    p.add_argument("--no-passcode", dest="open", action="store_true",
                   help="serve to the network without a leader passcode (not advised)")
    p.add_argument("--demo", action="store_true", help="seed the demo trials if the store is empty")
    del names
    return parser


def _human(result: dict[str, Any]) -> str:
    lines = []
    for key, value in result.items():
        if isinstance(value, (dict, list)):
            value = json.dumps(value, default=str)
        lines.append(f"{key}: {value}")
    return "\n".join(lines)


def _note(message, category, filename, lineno, file=None, line=None) -> None:
    """Warnings (an unbalanced plan, a small panel) as one plain line on stderr."""
    print(f"trials: note: {message}", file=sys.stderr)


def main(argv: Sequence[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    with warnings.catch_warnings():
        warnings.simplefilter("default")
        warnings.showwarning = _note
        try:
            _check_limits(args)
            result = args.handler(args)
        except TrialsError as exc:
            print(f"trials: {exc}", file=sys.stderr)
            return 2
        except OSError as exc:  # a missing folder, a folder given as a file, a full disk
            where = f" ({exc.filename})" if exc.filename else ""
            print(f"trials: {exc.strerror or exc}{where}", file=sys.stderr)
            return 2
    if args.command == "app":
        return int(result.get("exit", 0))
    text = json.dumps(result, default=str) if args.json else _human(result)
    try:
        print(text)
        sys.stdout.flush()
    except BrokenPipeError:  # the reader (head, a pager) stopped early: not an error
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
    return 0


if __name__ == "__main__":
    sys.exit(main())
