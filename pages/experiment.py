"""Recipe experiments: design runs over process settings, the run sheet and the
tasting plan, and the results (effects, surfaces, contours, the joint optimum)."""

import pandas as pd
import plotly.graph_objects as go
import streamlit as st

from trials import service, ui
from trials.errors import TrialsError
from trials.service import GOALS, KIND_LABELS, KINDS, MAXIMIZE, TWO_LEVEL

ui.require_leader()
store = ui.store()
st.title("Recipe experiments")
st.warning(service.FOOD_CODE_CAUTION, icon=":material/health_and_safety:")

FACTOR_COLUMNS = ["name", "unit", "low", "high", "safe_low", "safe_high", "levels"]
START = pd.DataFrame([
    {"name": "proof time", "unit": "min", "low": 40.0, "high": 60.0, "safe_low": 30.0,
     "safe_high": 80.0, "levels": ""},
    {"name": "salt", "unit": "%", "low": 1.5, "high": 2.1, "safe_low": 1.0,
     "safe_high": 2.6, "levels": ""},
], columns=FACTOR_COLUMNS)


def _factors(frame: pd.DataFrame) -> list[dict]:
    out = []
    for rec in frame.dropna(subset=["name"]).to_dict("records"):
        if not str(rec["name"]).strip():
            continue
        levels = [float(v) for v in str(rec.get("levels") or "").replace(";", ",").split(",")
                  if v.strip()]
        out.append({k: (None if pd.isna(rec[k]) else rec[k]) for k in
                    ("name", "unit", "low", "high", "safe_low", "safe_high")}
                   | {"levels": levels, "unit": str(rec.get("unit") or "")})
    return out


def _design_section() -> None:
    st.subheader("Design a new experiment")
    left, right = st.columns([3, 2])
    with left:
        name = st.text_input("Experiment name", placeholder="e.g. Roll: proof x salt x oven")
        frame = st.data_editor(START, num_rows="dynamic", key="factors", width="stretch",
                               column_config={
                                   "safe_low": st.column_config.NumberColumn(
                                       "safe low", help="lowest setting the kitchen declares "
                                       "safe to serve"),
                                   "safe_high": st.column_config.NumberColumn("safe high"),
                                   "levels": st.column_config.TextColumn(
                                       "levels", help="only these settings (comma-separated),"
                                       " e.g. whole minutes; empty: any")})
    with right:
        kind = st.selectbox("Design", KINDS, format_func=KIND_LABELS.get)
        c1, c2 = st.columns(2)
        centre = c1.number_input("Centre points", 0, 20, 3)
        blocks = c2.number_input("Blocks", 1, 2, 1)
        c3, c4 = st.columns(2)
        resolution = c3.number_input("Resolution (fractions)", 3, 6, 4,
                                     disabled=kind != "fractional-factorial")
        seed = c4.number_input("Seed of the run order", 0, 10**9, 1)
        allergens = st.text_input("The product's allergens", placeholder="gluten, milk")
    res = int(resolution) if kind == "fractional-factorial" else None
    try:
        factors = _factors(frame)
        plan = service.design_experiment(kind, factors, center_points=int(centre),
                                         blocks=int(blocks), resolution=res, seed=int(seed))
    except (TrialsError, ValueError) as exc:
        ui.show_problem(exc)
        return
    st.markdown(f"**{len(plan.runs)} runs**, {ui.literal(plan.label)}"
                + (f", resolution {plan.resolution}" if plan.resolution else ""))
    if plan.defining_relation:
        st.caption("Defining relation: I = " + " = ".join(ui.literal(w)
                                                          for w in plan.defining_relation))
        aliased = {k: v for k, v in plan.aliases.items() if v}
        if aliased:
            st.caption("Aliases (letters A, B, ... in the factors' order): " + "; ".join(
                f"{k} = {' = '.join(v)}" for k, v in aliased.items()))
    if plan.block_confounded:
        st.caption(f"Blocks confounded with: {ui.literal(plan.block_confounded)}")
    st.dataframe(plan.to_frame(), hide_index=True, width="stretch")
    if st.button("Create the experiment and its rating trial", type="primary",
                 disabled=not name.strip()):
        try:
            exp = service.create_experiment(
                store, name=name, kind=kind, factors=factors, center_points=int(centre),
                blocks=int(blocks), resolution=res, seed=int(seed),
                allergens=allergens, by=ui.who())
        except TrialsError as exc:
            ui.show_problem(exc)
            return
        ui.select_study(exp.trial_id)
        ui.changed()
        st.session_state["experiment"] = exp.id
        st.rerun()


def _runs_section(exp) -> None:
    table = service.run_table(store, exp.id)
    st.subheader("Runs, in the order to make them")
    st.dataframe(table.drop(columns=[c for c in table if c.startswith("coded_")]),
                 hide_index=True, width="stretch",
                 column_config={"std_order": "standard order", "signed_off": "signed off"})
    sheet = service.run_sheet(store, exp.id)
    st.download_button("Run sheet (PDF)", sheet.data, file_name=f"run-sheet-{exp.id}.pdf",
                       mime="application/pdf", icon=":material/print:")
    unsigned = service.unsigned_runs(store, exp.id)
    with st.expander("Food-safety sign-off", expanded=bool(unsigned)):
        if unsigned:
            st.warning("Not signed off yet (do not serve): "
                       + ", ".join(ui.literal(u) for u in unsigned))
        st.caption("Sign off only runs that were made and checked against your local food "
                   "code. Single batches are signed off on the Samples and batches screen.")
        signer = st.text_input("Signed off by", key="signer")
        if st.button("Sign off every run's batch", disabled=not signer.strip()):
            service.sign_off_runs(store, exp.id, by=signer)
            ui.changed()
            st.rerun()
    with st.expander("Record a measured variable for every run"):
        c1, c2 = st.columns(2)
        mname = c1.text_input("Measured variable", placeholder="yield")
        unit = c2.text_input("Unit", placeholder="%")
        values = st.data_editor(pd.DataFrame({"run": table["run"], "value": [None] * len(table)}),
                                hide_index=True, disabled=["run"], key="measures")
        if st.button("Save the values", disabled=not mname.strip()):
            try:
                for rec in values.dropna(subset=["value"]).to_dict("records"):
                    service.record_run_measures(store, exp.id, int(rec["run"]),
                                                [(mname, float(rec["value"]), unit)],
                                                by=ui.who())
            except (TrialsError, ValueError) as exc:
                ui.show_problem(exc)
            else:
                ui.changed()
                st.rerun()
    with st.expander("Plan the tasting of the runs"):
        choice = service.panel_choice(store, exp.trial_id)
        codes = st.multiselect("Panelists", choice.consented, default=choice.suggested)
        per = st.number_input("Runs one panelist tastes in a sitting", 2, len(exp.runs),
                              min(len(exp.runs), 6),
                              help="fewer than all runs: balanced incomplete blocks")
        seed = st.number_input("Seed of the plan", 0, 10**9, 1, key="plan_seed")
        if st.button("Draw the serving plan"):
            try:
                entries = service.plan_experiment_tasting(
                    store, exp.id, panelist_codes=codes, per_panelist=int(per),
                    seed=int(seed), by=ui.who())
            except TrialsError as exc:
                ui.show_problem(exc)
            else:
                ui.changed()
                st.success(f"{len(entries)} cups planned. Print ballots, the serving sheet "
                           "and labels on the Printing screen.")


def _effects_chart(effects) -> None:
    pts = effects.half_normal()
    active = set(effects.lenth.active)
    # only the effects past Lenth's margin are named, so the labels stay legible
    fig = go.Figure(go.Scatter(x=pts["quantile"], y=pts["abs_effect"], mode="markers+text",
                               text=[ui.chart_text(t) if t in active else ""
                                     for t in pts["term"]],
                               hovertext=[ui.chart_text(t) for t in pts["term"]],
                               textposition="middle left"))
    if effects.lenth.pse == effects.lenth.pse:  # not NaN
        fig.add_hline(y=effects.lenth.me, line_dash="dot",
                      annotation_text="Lenth margin of error")
    fig.update_layout(title="Half-normal plot of the effects", height=340,
                      xaxis_title="half-normal quantile", yaxis_title="|effect|",
                      margin={"l": 10, "r": 10, "t": 40, "b": 10})
    st.plotly_chart(fig, width="stretch")


def _results_section(exp) -> None:
    names = [f.name for f in exp.factors]
    st.subheader("Goals for the joint optimum")
    st.caption("Derringer-Suich desirability: 'maximize' with low = 7 means at least 7. "
               "The optimum is searched inside the design's range and the declared safe "
               "ranges.")
    fitted = [name for name, _, _ in service.responses_of(store, exp.id)]
    goals_frame = st.data_editor(
        pd.DataFrame([{"response": r, "kind": MAXIMIZE, "low": None, "high": None,
                       "target": None} for r in fitted]),
        column_config={"kind": st.column_config.SelectboxColumn(options=list(GOALS)),
                       "response": st.column_config.TextColumn(disabled=True)},
        hide_index=True, key="goals")
    goals = [{k: (None if pd.isna(v) else v) for k, v in g.items()}
             for g in goals_frame.to_dict("records")
             if not pd.isna(g["low"]) and not pd.isna(g["high"])]
    try:
        analysis = service.analyse_experiment(store, exp.id, goals=goals)
    except TrialsError as exc:
        ui.show_problem(exc)
        analysis = service.analyse_experiment(store, exp.id)
    fitted = [r.response for r in analysis.responses if r.fit is not None]
    if analysis.optimum is not None:
        opt = analysis.optimum
        with st.container(border=True):
            if opt.feasible:
                st.markdown(f"#### Suggested confirmation run (D = {opt.D:.2f})")
                st.markdown(", ".join(f"**{ui.literal(k)}** {v:g}"
                                      for k, v in (analysis.confirmation or {}).items()))
            else:
                st.markdown("#### No setting meets every goal inside the safe ranges")
            rows = [{"response": k, "predicted": v, "95% low": opt.interval[k][0],
                     "95% high": opt.interval[k][1], "d": opt.d.get(k)}
                    for k, v in opt.predicted.items()]
            st.dataframe(pd.DataFrame(rows), hide_index=True)
            st.caption("Make the confirmation run as a new batch and taste it: the "
                       "prediction interval says where one new run should fall.")
    elif analysis.note:
        st.info(ui.literal(analysis.note))
    st.subheader("Each response")
    if not fitted:
        st.info("No responses yet: record measured variables or collect the tasting.")
        return
    response = st.selectbox("Response", fitted)
    ra = analysis.response(response)
    fit = ra.fit
    st.caption(f"{ui.literal(ra.source)}, {ra.runs} runs, {ui.literal(ra.model)} model, "
               f"R² = {fit.r2:.3f}" + (f"; {ui.literal(ra.note)}" if ra.note else ""))
    if ra.effects is not None and exp.kind in TWO_LEVEL:
        c1, c2 = st.columns(2)
        with c1:
            st.dataframe(ra.effects.to_frame(), width="stretch")
            source = ra.effects.se_source
            st.caption(f"Lenth's PSE = {ra.effects.lenth.pse:.3g}, margin of error "
                       f"{ra.effects.lenth.me:.3g}, simultaneous {ra.effects.lenth.sme:.3g} "
                       "(Lenth 1989). " + ("No error estimate (unreplicated): judge the "
                                           "effects by Lenth's margin and the plot."
                                           if source == "none" else
                                           f"Standard errors from the {source}."))
        with c2:
            _effects_chart(ra.effects)
    c1, c2 = st.columns(2)
    c1.dataframe(fit.to_frame(), width="stretch")
    c2.dataframe(fit.anova_frame(), width="stretch")
    if fit.canonical is not None and ra.stationary:
        st.caption(f"Stationary point ({ui.literal(fit.canonical.nature)}, "
                   f"{'inside' if fit.canonical.inside else 'outside'} the design): "
                   + ", ".join(f"{ui.literal(k)} {v:.4g}" for k, v in ra.stationary.items())
                   + f"; fitted {fit.canonical.value:.3g}; eigenvalues "
                   + ", ".join(f"{v:.3g}" for v in fit.canonical.eigenvalues))
    if len(names) >= 2:
        c1, c2 = st.columns(2)
        xf = c1.selectbox("Across", names, index=0)
        yf = c2.selectbox("Up", names, index=1)
        if xf != yf:
            xs, ys, z = service.contour(analysis, response, xf, yf, n=80)
            fig = go.Figure(go.Contour(x=xs, y=ys, z=z, contours={"showlabels": True},
                                       colorscale="Viridis"))
            if analysis.optimum is not None and analysis.confirmation:
                fig.add_trace(go.Scatter(x=[analysis.confirmation[xf]],
                                         y=[analysis.confirmation[yf]], mode="markers",
                                         marker={"symbol": "x", "size": 14, "color": "red"},
                                         name="confirmation run"))
            fig.update_layout(title=ui.chart_text(f"{response}: fitted surface"), height=460,
                              xaxis_title=ui.chart_text(xf), yaxis_title=ui.chart_text(yf),
                              margin={"l": 10, "r": 10, "t": 40, "b": 10})
            st.plotly_chart(fig, width="stretch")
            st.caption("Other factors held at the optimum (or the centre without goals).")


experiments = service.list_experiments(store)
ids = [e.id for e in experiments]
by_id = {e.id: e for e in experiments}
options = ["new", *ids]
wanted = st.session_state.get("experiment")
chosen = st.selectbox("Experiment", options,
                      index=options.index(wanted) if wanted in options else
                      (1 if ids else 0),
                      format_func=lambda i: "Design a new experiment" if i == "new"
                      else f"#{i} {by_id[i].name} ({len(by_id[i].runs)} runs)")
if chosen == "new":
    _design_section()
else:
    st.session_state["experiment"] = chosen
    exp = by_id[chosen]
    section = st.segmented_control("Show", ["Runs and tasting", "Results"],
                                   default="Runs and tasting")
    st.caption(f"{ui.literal(KIND_LABELS[exp.kind])}; tasted as trial #{exp.trial_id}; "
               + ", ".join(f"{ui.literal(f.name)} {f.low:g}..{f.high:g} {ui.literal(f.unit)}"
                           for f in exp.factors))
    if section == "Results":
        _results_section(exp)
    else:
        _runs_section(exp)
