"""History: every trial on file, searched by sample, process setting, method and
decision; the control sample's scores across trials as a trend."""

import streamlit as st

from trials import service, ui
from trials.methods import METHODS

ui.require_leader()
st.title("Trial history")
store = ui.store()

left, mid, right = st.columns([3, 1.4, 1.6])
text = left.text_input(
    "Search",
    placeholder="a sample, a product, a process setting (e.g. fryer), a word of the decision",
)
labels = {"": "any method"} | {m.name: m.label for m in METHODS}
method = mid.selectbox("Method", list(labels), format_func=labels.get)
decision = right.text_input("Decision contains", placeholder="e.g. keep")

rows = service.history(store, text=text, method=method or None, decision=decision or None)
st.caption(f"{len(rows)} trial(s) match.")
if rows:
    st.dataframe(
        [{"id": r["id"], "trial": r["name"], "product": r["product"], "method": r["method"],
          "status": r["status"], "created": r["created_on"], "control": r["control"],
          "decision": r["decision"], "settings": r["settings"]} for r in rows],
        hide_index=True,
        width="stretch",
    )

st.subheader("The control across trials")
controls = service.control_names(store)
if not controls:
    st.info("No trial on file names a control sample yet.")
else:
    control = st.selectbox("Control sample", controls)
    points = service.control_trend(store, control)
    if not points:
        st.info(f"No trial on file has scores for {ui.literal(repr(control))}.")
    else:
        import plotly.graph_objects as go  # only where a chart is drawn: a slow import

        fig = go.Figure()
        for attribute in sorted({p.attribute for p in points}):
            mine = [p for p in points if p.attribute == attribute]
            fig.add_trace(go.Scatter(
                x=[ui.chart_text(f"{p.date} {p.study}") for p in mine], y=[p.mean for p in mine],
                error_y={"type": "data", "array": [p.sd or 0 for p in mine]},
                mode="lines+markers", name=ui.chart_text(attribute),
            ))
        fig.update_layout(height=360, margin={"t": 30, "b": 10}, yaxis_title="mean score (± sd)",
                          legend_title="attribute")
        st.plotly_chart(fig, width="stretch")
        st.caption("Descriptive only: panels, sessions and batches differ between trials.")
        st.dataframe([p.to_dict() for p in points], hide_index=True, width="stretch")
