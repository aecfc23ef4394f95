"""Samples, rated attributes and test batches (process settings, measures, sign-off)."""

import datetime as dt

import pandas as pd
import streamlit as st

from trials import service, ui
from trials.errors import TrialsError
from trials.model import AttributeKind

ui.require_leader()
store, trial_id, study, spec, overview = ui.open_trial()

st.title(f"Samples and batches: {ui.literal(study.name)}")
ui.show_flash()
ui.food_caution(trial_id)

# ------------------------------------------------------------------ samples
st.subheader("Samples")
if study.samples:
    st.dataframe(
        pd.DataFrame([{"sample": x.name, "control": x.is_control,
                       "allergens": ", ".join(x.allergens), "description": x.description}
                      for x in study.samples]),
        hide_index=True, width="stretch",
    )
if overview.plan_size:
    st.caption("The plan is drawn: samples are fixed.")
else:
    # the forms keep what was typed when it is refused; they empty only on success
    with st.form("add_sample", clear_on_submit=False):
        c1, c2 = st.columns([2, 1])
        s_name = c1.text_input("Sample name", key="new_sample_name")
        s_control = c2.checkbox("This is the control", key="new_sample_control")
        s_allergens = st.text_input("Allergens it holds (comma-separated)",
                                    placeholder="gluten, egg, milk", key="new_sample_allergens")
        s_desc = st.text_input("Description", key="new_sample_description")
        if st.form_submit_button("Add the sample"):
            try:
                service.add_sample(store, trial_id, s_name, is_control=s_control,
                                   allergens=s_allergens, description=s_desc, by=ui.who())
            except TrialsError as exc:
                ui.show_problem(exc)
            else:
                ui.changed()
                ui.clear_fields("new_sample_name", "new_sample_control", "new_sample_allergens",
                                "new_sample_description")
                ui.flash(f"Sample {ui.literal(s_name.strip())} added.")
                st.rerun()

# ------------------------------------------------------------------ attributes
if spec.scores_each_cup:  # ratings, and CATA (its words: attributes of kind "check")
    st.subheader("Rated attributes")
    if study.attributes:
        st.dataframe(
            pd.DataFrame([{"attribute": a.name, "kind": a.kind.label,
                           "scale": f"{a.low}..{a.high}",
                           "anchors": " / ".join(a.anchors)} for a in study.attributes]),
            hide_index=True, width="stretch",
        )
    if overview.responses:
        st.caption("Answers are on file: attributes are fixed.")
    else:
        with st.form("add_attribute", clear_on_submit=False):
            c1, c2, c3, c4 = st.columns([2, 1, 1, 1])
            a_name = c1.text_input("Attribute", placeholder="overall liking", key="new_attr_name")
            a_kind = c2.selectbox("Kind", [k.value for k in AttributeKind], key="new_attr_kind",
                                  format_func=lambda v: AttributeKind(v).label)
            a_low = c3.number_input("Lowest point", 0, 10, 1, key="new_attr_low")
            a_high = c4.number_input("Highest point", 1, 15, 9, key="new_attr_high")
            a_anchors = st.text_input("Anchors (the two ends, or every point, separated by ;)",
                                      placeholder="dislike extremely; like extremely",
                                      key="new_attr_anchors")
            if st.form_submit_button("Add the attribute"):
                anchors = [x.strip() for x in a_anchors.split(";") if x.strip()]
                try:
                    word = a_kind == AttributeKind.CHECK  # a CATA word: ticked 1, not 0
                    service.add_attribute(store, trial_id, a_name, kind=a_kind,
                                          low=0 if word else int(a_low),
                                          high=1 if word else int(a_high), anchors=anchors,
                                          by=ui.who())
                except TrialsError as exc:
                    ui.show_problem(exc)
                else:
                    ui.changed()
                    ui.clear_fields("new_attr_name", "new_attr_kind", "new_attr_low",
                                    "new_attr_high", "new_attr_anchors")
                    ui.flash(f"Attribute {ui.literal(a_name.strip())} added.")
                    st.rerun()

# ------------------------------------------------------------------ correct a batch value


def _edit_value(batches) -> None:
    """Correct one recorded setting or measured value of a batch (audited)."""
    values = [(b, kind, m) for b in batches
              for kind, items in (("setting", b.settings), ("measure", b.measures))
              for m in items]
    if not values:
        return
    with st.expander("Correct a recorded value", icon=":material/edit:"):
        pick = st.selectbox(
            "Value", range(len(values)), key="edit_value_pick",
            format_func=lambda i: (f"{values[i][0].sample_name} / {values[i][0].label}: "
                                   f"{values[i][2].name} ({values[i][1]})"))
        batch, kind, m = values[pick]
        with st.form("edit_value"):
            c1, c2 = st.columns(2)
            shown = f"{m.value:g}" if isinstance(m.value, float) else str(m.value)
            new_value = c1.text_input("Value", value=shown)
            new_unit = c2.text_input("Unit", value=m.unit, help="e.g. °C, K, g, kg, min, %")
            if st.form_submit_button("Save the value"):
                try:
                    service.set_batch_value(store, trial_id, batch.sample_name, batch.label,
                                            kind=kind, name=m.name, value=new_value,
                                            unit=new_unit, by=ui.who())
                except TrialsError as exc:
                    ui.show_problem(exc)
                else:
                    ui.changed()
                    st.toast("Value saved (the change is in the audit log).",
                             icon=":material/check:")
                    st.rerun()


# ------------------------------------------------------------------ batches
st.subheader("Test batches")
batches = service.list_batches(store, trial_id)


def _value(m) -> str:
    text = f"{m.value:g}" if isinstance(m.value, float) else str(m.value)
    return f"{m.name} {text} {m.unit}".strip()


if batches:
    rows = []
    for b in batches:
        rows.append({
            "sample": b.sample_name, "batch": b.label,
            "prepared on": b.prepared_on or "\u2014",
            "by": b.prepared_by,
            "settings": "; ".join(_value(m) for m in b.settings),
            "measured": "; ".join(_value(m) for m in b.measures),
            "signed off": (f"{b.safety_signed_by} on {b.safety_signed_on}" if b.signed_off
                           else "not yet"),
        })
    st.dataframe(pd.DataFrame(rows), hide_index=True, width="stretch")
    waiting = [b for b in batches if not b.signed_off]
    if waiting:
        with st.form("sign_off"):
            st.markdown("**Food-safety sign-off** (before any cup is served)")
            pick = st.selectbox(
                "Batch", range(len(waiting)),
                format_func=lambda i: f"{waiting[i].sample_name} / {waiting[i].label}")
            signer = st.text_input("Signed off by", value=ui.who() if ui.who() != "leader" else "")
            st.caption("Sign off only what was prepared, cooled and held as your local food "
                       "code requires.")
            if st.form_submit_button("Sign off"):
                b = waiting[pick]
                try:
                    service.sign_off_batch(store, trial_id, b.sample_name, b.label, by=signer)
                except TrialsError as exc:
                    ui.show_problem(exc)
                else:
                    ui.changed()
                    st.rerun()
else:
    st.info("No batches recorded yet.")

if study.samples:
    with st.expander("Record a batch", icon=":material/add:"):
        with st.form("add_batch", clear_on_submit=False):  # kept on a refusal
            c1, c2 = st.columns(2)
            b_sample = c1.selectbox("Sample", [x.name for x in study.samples],
                                    key="new_batch_sample")
            b_label = c2.text_input("Batch label", placeholder="B1", key="new_batch_label")
            c3, c4 = st.columns(2)
            b_on = c3.date_input("Prepared on", value=dt.date.today(), key="new_batch_on")
            b_by = c4.text_input("Prepared by", key="new_batch_by")
            st.markdown("Process settings and measured variables (name, value, unit):")
            blank = pd.DataFrame({"kind": pd.Series(["setting", "measure"], dtype="string"),
                                  "name": pd.Series(["", ""], dtype="string"),
                                  "value": pd.Series(["", ""], dtype="string"),
                                  "unit": pd.Series(["", ""], dtype="string")})
            values = st.data_editor(
                blank, num_rows="dynamic", hide_index=True, key="batch_values",
                column_config={
                    "kind": st.column_config.SelectboxColumn("kind", options=["setting", "measure"],
                                                             required=True),
                    "name": st.column_config.TextColumn("name", help="e.g. oven temperature"),
                    "value": st.column_config.TextColumn("value"),
                    "unit": st.column_config.TextColumn("unit", help="e.g. °C, min, g"),
                },
            )
            b_notes = st.text_input("Notes", key="new_batch_notes")
            c5, c6 = st.columns(2)
            b_signer = c5.text_input("Signed off for food safety by", key="new_batch_signer",
                                     help="Leave empty if the batch is not signed off yet; "
                                          "sign it off later below.")
            b_signed_on = c6.date_input("Signed off on", value=dt.date.today())
            if st.form_submit_button("Record the batch"):
                filled = values[values["name"].fillna("").str.strip() != ""]
                settings = [(r["name"], r["value"], r["unit"] or "")
                            for r in filled.to_dict("records") if r["kind"] == "setting"]
                measures = [(r["name"], r["value"], r["unit"] or "")
                            for r in filled.to_dict("records") if r["kind"] == "measure"]
                try:
                    service.add_batch(store, trial_id, b_sample, b_label, prepared_on=b_on,
                                      prepared_by=b_by, settings=settings, measures=measures,
                                      notes=b_notes, safety_signed_by=b_signer,
                                      safety_signed_on=b_signed_on, by=ui.who())
                except TrialsError as exc:
                    ui.show_problem(exc)
                else:
                    ui.changed()
                    ui.clear_fields("new_batch_label", "new_batch_by", "new_batch_notes",
                                    "new_batch_signer", "batch_values")
                    ui.flash(f"Batch {ui.literal(b_label.strip())} of "
                             f"{ui.literal(b_sample)} recorded.", "batch")
                    st.rerun()
    ui.show_flash("batch")
    if batches:
        _edit_value(batches)
    with st.expander("Import batch values from a file", icon=":material/upload_file:"):
        st.caption("Columns: sample, batch, kind (setting or measure), name, value, unit; "
                   "optional prepared_on, prepared_by. All rows or none.")
        up = st.file_uploader("CSV or Excel", type=["csv", "txt", "xlsx"],
                              key=f"batch_file_{st.session_state.get('batch_gen', 0)}")
        ui.show_flash("import")
        if up is not None and st.button("Import the batch values"):
            try:
                n = service.import_batches(store, trial_id, ui.upload_path(up), by=ui.who())
            except TrialsError as exc:
                ui.show_problem(exc)
            else:
                ui.changed()
                st.session_state["batch_gen"] = st.session_state.get("batch_gen", 0) + 1
                ui.flash(f"{n} values imported; the batches above are up to date.", "import")
                st.rerun()
