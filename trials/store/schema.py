"""The tables of the trial store (SQLAlchemy 2 declarative mapping).

One study (a trial) holds its samples, attributes, sessions, serving plan, access tokens
and responses; batches belong to a sample; panelists are one roster shared by every
trial; the audit log records every change. The decoding key (code -> sample) lives only
in ``plan_entry``.

List-valued fields (allergens, scale anchors) are stored as text: allergens as a
comma-separated list of lower-case names, anchors as a JSON array.
"""

from __future__ import annotations

import datetime as dt

from sqlalchemy import (
    Boolean,
    Date,
    DateTime,
    Float,
    ForeignKey,
    Index,
    Integer,
    String,
    Text,
    UniqueConstraint,
)
from sqlalchemy.orm import DeclarativeBase, Mapped, mapped_column, relationship


class Base(DeclarativeBase):
    pass


class SchemaVersion(Base):
    """One row per applied schema version (the highest is the current one)."""

    __tablename__ = "schema_version"

    version: Mapped[int] = mapped_column(Integer, primary_key=True, autoincrement=False)
    applied_at: Mapped[dt.datetime] = mapped_column(DateTime)
    note: Mapped[str] = mapped_column(String(200), default="")


class StudyRow(Base):
    __tablename__ = "study"

    id: Mapped[int] = mapped_column(primary_key=True)
    name: Mapped[str] = mapped_column(String(200))
    product: Mapped[str] = mapped_column(String(200), default="")
    aim: Mapped[str] = mapped_column(String(20), default="")
    target_sample: Mapped[str] = mapped_column(String(200), default="")
    objective: Mapped[str] = mapped_column(Text, default="")
    method: Mapped[str] = mapped_column(String(40))
    alpha: Mapped[float] = mapped_column(Float, default=0.05)
    beta: Mapped[float] = mapped_column(Float, default=0.20)
    pd: Mapped[float | None] = mapped_column(Float, nullable=True)
    delta: Mapped[float | None] = mapped_column(Float, nullable=True)
    status: Mapped[str] = mapped_column(String(20), default="planning")
    decision: Mapped[str] = mapped_column(Text, default="")
    rationale: Mapped[str] = mapped_column(Text, default="")
    created_on: Mapped[dt.date | None] = mapped_column(Date, nullable=True)

    samples: Mapped[list[SampleRow]] = relationship(
        back_populates="study", cascade="all, delete-orphan", order_by="SampleRow.position"
    )
    attributes: Mapped[list[AttributeRow]] = relationship(
        back_populates="study", cascade="all, delete-orphan", order_by="AttributeRow.position"
    )
    sessions: Mapped[list[SessionRow]] = relationship(
        back_populates="study", cascade="all, delete-orphan", order_by="SessionRow.id"
    )


class SampleRow(Base):
    __tablename__ = "sample"
    __table_args__ = (UniqueConstraint("study_id", "name", name="uq_sample_name"),)

    id: Mapped[int] = mapped_column(primary_key=True)
    study_id: Mapped[int] = mapped_column(ForeignKey("study.id", ondelete="CASCADE"), index=True)
    position: Mapped[int] = mapped_column(Integer, default=0)
    name: Mapped[str] = mapped_column(String(200))
    is_control: Mapped[bool] = mapped_column(Boolean, default=False)
    allergens: Mapped[str] = mapped_column(String(400), default="")
    description: Mapped[str] = mapped_column(Text, default="")

    study: Mapped[StudyRow] = relationship(back_populates="samples")
    batches: Mapped[list[BatchRow]] = relationship(
        back_populates="sample", cascade="all, delete-orphan", order_by="BatchRow.id"
    )


class AttributeRow(Base):
    __tablename__ = "attribute"
    __table_args__ = (UniqueConstraint("study_id", "name", name="uq_attribute_name"),)

    id: Mapped[int] = mapped_column(primary_key=True)
    study_id: Mapped[int] = mapped_column(ForeignKey("study.id", ondelete="CASCADE"), index=True)
    position: Mapped[int] = mapped_column(Integer, default=0)
    name: Mapped[str] = mapped_column(String(200))
    kind: Mapped[str] = mapped_column(String(20), default="hedonic")
    low: Mapped[int] = mapped_column(Integer, default=1)
    high: Mapped[int] = mapped_column(Integer, default=9)
    anchors: Mapped[str] = mapped_column(Text, default="[]")

    study: Mapped[StudyRow] = relationship(back_populates="attributes")


class BatchRow(Base):
    __tablename__ = "batch"
    __table_args__ = (UniqueConstraint("sample_id", "label", name="uq_batch_label"),)

    id: Mapped[int] = mapped_column(primary_key=True)
    sample_id: Mapped[int] = mapped_column(ForeignKey("sample.id", ondelete="CASCADE"), index=True)
    label: Mapped[str] = mapped_column(String(100))
    prepared_on: Mapped[dt.date | None] = mapped_column(Date, nullable=True)
    prepared_by: Mapped[str] = mapped_column(String(200), default="")
    safety_signed_by: Mapped[str] = mapped_column(String(200), default="")
    safety_signed_on: Mapped[dt.date | None] = mapped_column(Date, nullable=True)
    notes: Mapped[str] = mapped_column(Text, default="")

    sample: Mapped[SampleRow] = relationship(back_populates="batches")
    values: Mapped[list[BatchValueRow]] = relationship(
        back_populates="batch", cascade="all, delete-orphan", order_by="BatchValueRow.position"
    )


class BatchValueRow(Base):
    """A process setting (``kind='setting'``) or a measured variable (``'measure'``)."""

    __tablename__ = "batch_value"
    __table_args__ = (UniqueConstraint("batch_id", "kind", "name", name="uq_batch_value"),)

    id: Mapped[int] = mapped_column(primary_key=True)
    batch_id: Mapped[int] = mapped_column(ForeignKey("batch.id", ondelete="CASCADE"), index=True)
    kind: Mapped[str] = mapped_column(String(10))
    position: Mapped[int] = mapped_column(Integer, default=0)
    name: Mapped[str] = mapped_column(String(200))
    value: Mapped[str] = mapped_column(String(200))
    is_number: Mapped[bool] = mapped_column(Boolean, default=True)
    unit: Mapped[str] = mapped_column(String(40), default="")

    batch: Mapped[BatchRow] = relationship(back_populates="values")


class PanelistRow(Base):
    __tablename__ = "panelist"

    id: Mapped[int] = mapped_column(primary_key=True)
    code: Mapped[str] = mapped_column(String(40), unique=True)
    allergens: Mapped[str] = mapped_column(String(400), default="")
    restrictions: Mapped[str] = mapped_column(Text, default="")
    consent_on: Mapped[dt.date | None] = mapped_column(Date, nullable=True)


class SessionRow(Base):
    __tablename__ = "tasting_session"
    __table_args__ = (UniqueConstraint("study_id", "name", name="uq_session_name"),)

    id: Mapped[int] = mapped_column(primary_key=True)
    study_id: Mapped[int] = mapped_column(ForeignKey("study.id", ondelete="CASCADE"), index=True)
    name: Mapped[str] = mapped_column(String(40))
    held_on: Mapped[dt.date | None] = mapped_column(Date, nullable=True)

    study: Mapped[StudyRow] = relationship(back_populates="sessions")


class PlanEntryRow(Base):
    __tablename__ = "plan_entry"
    __table_args__ = (
        UniqueConstraint("session_id", "panelist_id", "position", name="uq_plan_position"),
        UniqueConstraint("session_id", "panelist_id", "code", name="uq_plan_code"),
    )

    id: Mapped[int] = mapped_column(primary_key=True)
    session_id: Mapped[int] = mapped_column(
        ForeignKey("tasting_session.id", ondelete="CASCADE"), index=True
    )
    panelist_id: Mapped[int] = mapped_column(ForeignKey("panelist.id"), index=True)
    position: Mapped[int] = mapped_column(Integer)
    code: Mapped[str] = mapped_column(String(10))
    sample_id: Mapped[int] = mapped_column(ForeignKey("sample.id", ondelete="CASCADE"))
    set_index: Mapped[int] = mapped_column(Integer, default=0)
    role: Mapped[str] = mapped_column(String(4), default="")
    batch_id: Mapped[int | None] = mapped_column(
        ForeignKey("batch.id", ondelete="SET NULL"), nullable=True
    )


class AccessTokenRow(Base):
    """The unguessable token in a panelist's tasting link, one per trial and panelist."""

    __tablename__ = "access_token"
    __table_args__ = (UniqueConstraint("study_id", "panelist_id", name="uq_token_owner"),)

    id: Mapped[int] = mapped_column(primary_key=True)
    study_id: Mapped[int] = mapped_column(ForeignKey("study.id", ondelete="CASCADE"), index=True)
    panelist_id: Mapped[int] = mapped_column(ForeignKey("panelist.id"))
    token: Mapped[str] = mapped_column(String(64), unique=True)


class ResponseRow(Base):
    """One answer. ``question`` identifies what was asked, so that one question holds
    one answer: ``choice:<set_index>`` for a forced choice, ``<code>:<attribute>`` for a
    score or a rank."""

    __tablename__ = "response"
    __table_args__ = (
        UniqueConstraint("session_id", "panelist_id", "question", name="uq_response_question"),
    )

    id: Mapped[int] = mapped_column(primary_key=True)
    study_id: Mapped[int] = mapped_column(ForeignKey("study.id", ondelete="CASCADE"), index=True)
    session_id: Mapped[int] = mapped_column(ForeignKey("tasting_session.id", ondelete="CASCADE"))
    panelist_id: Mapped[int] = mapped_column(ForeignKey("panelist.id"))
    question: Mapped[str] = mapped_column(String(240))
    code: Mapped[str] = mapped_column(String(40), default="")
    attribute: Mapped[str] = mapped_column(String(200))
    value: Mapped[str] = mapped_column(String(200), default="")
    comment: Mapped[str] = mapped_column(Text, default="")
    entered_by: Mapped[str] = mapped_column(String(200), default="")
    entered_at: Mapped[dt.datetime | None] = mapped_column(DateTime, nullable=True)
    mode: Mapped[str] = mapped_column(String(10), default="tablet")


class FinishRow(Base):
    """A panelist's Finish on the tablet for one session: from then on the tablet no
    longer changes that session's answers (the leader still may, audited)."""

    __tablename__ = "ballot_finish"
    __table_args__ = (UniqueConstraint("session_id", "panelist_id", name="uq_finish_owner"),)

    id: Mapped[int] = mapped_column(primary_key=True)
    study_id: Mapped[int] = mapped_column(ForeignKey("study.id", ondelete="CASCADE"), index=True)
    session_id: Mapped[int] = mapped_column(ForeignKey("tasting_session.id", ondelete="CASCADE"))
    panelist_id: Mapped[int] = mapped_column(ForeignKey("panelist.id"))
    finished_at: Mapped[dt.datetime] = mapped_column(DateTime)


class AuditRow(Base):
    """One change: who changed which field of which row, from what to what, when."""

    __tablename__ = "audit_log"
    __table_args__ = (Index("ix_audit_study", "study_id", "id"),)

    id: Mapped[int] = mapped_column(primary_key=True)
    study_id: Mapped[int | None] = mapped_column(Integer, nullable=True)
    at: Mapped[dt.datetime] = mapped_column(DateTime)
    who: Mapped[str] = mapped_column(String(200), default="")
    table_name: Mapped[str] = mapped_column(String(40))
    row_id: Mapped[int | None] = mapped_column(Integer, nullable=True)
    field: Mapped[str] = mapped_column(String(200), default="")
    old_value: Mapped[str | None] = mapped_column(Text, nullable=True)
    new_value: Mapped[str | None] = mapped_column(Text, nullable=True)


class ExperimentRow(Base):
    """A recipe experiment: a designed set of runs over process settings, tasted as the
    rating trial ``study_id`` (one sample and one batch per run). Schema version 5."""

    __tablename__ = "experiment"

    id: Mapped[int] = mapped_column(primary_key=True)
    study_id: Mapped[int] = mapped_column(
        ForeignKey("study.id", ondelete="CASCADE"), unique=True)
    name: Mapped[str] = mapped_column(String(200))
    kind: Mapped[str] = mapped_column(String(40))
    seed: Mapped[int | None] = mapped_column(Integer, nullable=True)
    center_points: Mapped[int] = mapped_column(Integer, default=0)
    blocks: Mapped[int] = mapped_column(Integer, default=1)
    resolution: Mapped[int | None] = mapped_column(Integer, nullable=True)
    generators: Mapped[str] = mapped_column(String(100), default="")
    created_on: Mapped[dt.date | None] = mapped_column(Date, nullable=True)

    factors: Mapped[list[ExperimentFactorRow]] = relationship(
        cascade="all, delete-orphan", order_by="ExperimentFactorRow.position")
    runs: Mapped[list[ExperimentRunRow]] = relationship(
        cascade="all, delete-orphan", order_by="ExperimentRunRow.run_order")


class ExperimentFactorRow(Base):
    """A factor of an experiment: unit, low/high (coded -1/+1), declared levels (JSON,
    may be empty) and the kitchen's declared safe range."""

    __tablename__ = "experiment_factor"
    __table_args__ = (UniqueConstraint("experiment_id", "name", name="uq_factor_name"),)

    id: Mapped[int] = mapped_column(primary_key=True)
    experiment_id: Mapped[int] = mapped_column(
        ForeignKey("experiment.id", ondelete="CASCADE"), index=True)
    position: Mapped[int] = mapped_column(Integer, default=0)
    name: Mapped[str] = mapped_column(String(200))
    unit: Mapped[str] = mapped_column(String(40), default="")
    low: Mapped[float] = mapped_column(Float)
    high: Mapped[float] = mapped_column(Float)
    safe_low: Mapped[float] = mapped_column(Float)
    safe_high: Mapped[float] = mapped_column(Float)
    levels: Mapped[str] = mapped_column(Text, default="[]")


class ExperimentRunRow(Base):
    """One run: its place in the random order and the design, its block, its coded
    settings (JSON) and the sample and batch it was made as."""

    __tablename__ = "experiment_run"
    __table_args__ = (UniqueConstraint("experiment_id", "run_order", name="uq_run_order"),)

    id: Mapped[int] = mapped_column(primary_key=True)
    experiment_id: Mapped[int] = mapped_column(
        ForeignKey("experiment.id", ondelete="CASCADE"), index=True)
    run_order: Mapped[int] = mapped_column(Integer)
    std_order: Mapped[int] = mapped_column(Integer)
    block: Mapped[int] = mapped_column(Integer, default=1)
    point: Mapped[str] = mapped_column(String(20), default="")
    coded: Mapped[str] = mapped_column(Text, default="[]")
    sample_id: Mapped[int] = mapped_column(ForeignKey("sample.id", ondelete="CASCADE"))
    batch_id: Mapped[int | None] = mapped_column(
        ForeignKey("batch.id", ondelete="SET NULL"), nullable=True)
