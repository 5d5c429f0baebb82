"""The session and the undo commands, without any widget."""

from __future__ import annotations

import numpy as np
import pytest

from scalewright.engine import (
    ColumnChoice,
    FitSettings,
    column_values,
    describe,
    fit,
    fit_column,
    histogram,
    mapped_edges,
)
from scalewright.errors import ColumnError, OptionError, ScalewrightError
from scalewright.gui import commands
from scalewright.session import Session


class Recorder:
    def __init__(self, session: Session) -> None:
        self.events: list[tuple] = []
        session.table_loaded.connect(lambda: self.events.append(("table_loaded",)))
        session.choices_changed.connect(lambda labels: self.events.append(("choices", labels)))
        session.fitted.connect(lambda label: self.events.append(("fitted", label)))
        session.settings_changed.connect(lambda: self.events.append(("settings",)))
        session.selection_changed.connect(lambda labels: self.events.append(("selection", labels)))
        session.dirty_changed.connect(lambda d: self.events.append(("dirty", d)))
        session.scaled_figures_ready.connect(
            lambda label: self.events.append(("scaled_figures_ready", label))
        )

    def of(self, name: str) -> list[tuple]:
        return [e for e in self.events if e[0] == name]


def test_kinds_and_what_can_be_scaled(session):
    assert session.kind("tree_code") == "identifier"
    assert not session.scalable("tree_code")
    assert "identifier" in session.why_not_scalable("tree_code")
    assert not session.scalable("orchard")
    assert session.scalable("yield_kg")
    assert "yield_kg" in session.numeric_labels
    assert "tree_code" not in session.numeric_labels
    # the first scalable column is selected on load
    assert session.selection == ["tree_age_years"]


def test_the_window_and_the_command_line_give_one_reason_per_kind(session):
    from scalewright import tasks

    for label in ("tree_code", "planted_on", "orchard"):  # identifier, date, text
        with pytest.raises(ColumnError) as err:
            tasks.check_choices(session.table, {label: ColumnChoice("zscore")})
        assert str(err.value) == f"column '{label}': is {session.why_not_scalable(label)}"


def test_identifier_cannot_be_given_a_method(session, stack):
    with pytest.raises(ScalewrightError, match="identifier"):
        commands.push_choices(stack, session, {"tree_code": ColumnChoice("zscore")})
    assert stack.count() == 0
    assert session.choice("tree_code").method == "none"
    # set_method quietly skips columns that cannot be scaled
    assert commands.set_method(stack, session, ["tree_code", "yield_kg"], "zscore")
    assert session.choice("yield_kg").method == "zscore"
    assert session.choice("tree_code").method == "none"


def test_set_method_on_several_columns_is_one_undo_step(session, stack):
    rec = Recorder(session)
    assert commands.set_method(stack, session, ["yield_kg", "soil_ph", "sugar_brix"], "minmax")
    assert stack.count() == 1
    assert {session.choice(c).method for c in ("yield_kg", "soil_ph", "sugar_brix")} == {"minmax"}
    assert rec.of("choices") == [("choices", ["yield_kg", "soil_ph", "sugar_brix"])]
    assert session.dirty
    stack.undo()
    assert {session.choice(c).method for c in ("yield_kg", "soil_ph", "sugar_brix")} == {"none"}
    stack.redo()
    assert session.choice("soil_ph") == ColumnChoice("minmax", {"low": 0.0, "high": 1.0})


def test_nothing_is_pushed_when_nothing_changes(session, stack):
    commands.set_method(stack, session, ["yield_kg"], "zscore")
    assert not commands.set_method(stack, session, ["yield_kg"], "zscore")
    assert not commands.set_option(stack, session, ["yield_kg"], "sd", "sample")
    assert stack.count() == 1


def test_repeated_option_edits_merge_into_one_step(session, stack):
    commands.set_method(stack, session, ["yield_kg", "soil_ph"], "minmax")
    for value in (-0.0, -0.5, -1.0):  # typing "-1" into the low box
        commands.set_option(stack, session, ["yield_kg", "soil_ph"], "low", value)
    assert stack.count() == 2
    assert session.choice("soil_ph").options["low"] == -1.0
    stack.undo()
    assert session.choice("soil_ph").options["low"] == 0.0
    assert session.choice("soil_ph").method == "minmax"
    # a different option does not merge into the previous one
    stack.redo()
    commands.set_option(stack, session, ["yield_kg", "soil_ph"], "high", 2.0)
    assert stack.count() == 3


def test_typing_back_to_the_old_value_leaves_nothing_to_undo(session, stack):
    commands.set_method(stack, session, ["yield_kg"], "minmax")
    commands.set_option(stack, session, ["yield_kg"], "high", 5.0)
    commands.set_option(stack, session, ["yield_kg"], "high", 1.0)
    assert stack.count() == 1  # the merged option edit became obsolete and was dropped


def test_invalid_option_is_refused_before_anything_changes(session, stack):
    commands.set_method(stack, session, ["yield_kg"], "minmax")
    with pytest.raises(OptionError, match="low < high"):
        commands.set_option(stack, session, ["yield_kg"], "low", 3.0)
    assert session.choice("yield_kg").options["low"] == 0.0
    assert stack.count() == 1


def test_only_changed_columns_are_refitted(session, stack):
    commands.set_method(stack, session, ["yield_kg", "soil_ph"], "zscore")
    before = session.fit_count
    rec = Recorder(session)
    commands.set_method(stack, session, ["yield_kg", "soil_ph"], "zscore")  # no change
    commands.set_option(stack, session, ["yield_kg"], "sd", "population")
    assert session.fit_count == before + 1
    assert rec.of("fitted") == [("fitted", "yield_kg")]
    # undoing returns to a fit already made: nothing is fitted again
    stack.undo()
    assert session.fit_count == before + 1
    assert session.fitted_column("yield_kg").pooled.params["ddof"] == 1


def test_fits_match_the_engine(session, harvest_table, stack):
    commands.set_method(stack, session, ["yield_kg"], "boxcox")
    commands.set_option(stack, session, ["yield_kg"], "standardize", True)
    expected = fit_column(
        column_values(harvest_table.data, "yield_kg"),
        ColumnChoice("boxcox", {"standardize": True}),
        column="yield_kg",
    )
    got = session.fitted_column("yield_kg")
    assert got.pooled.params == expected.pooled.params


def test_fit_settings_refit_every_chosen_column_and_match_the_engine(session, harvest_table, stack):
    commands.set_method(stack, session, ["yield_kg", "soil_ph"], "zscore")
    rec = Recorder(session)
    settings = FitSettings(fit_where=("split", "train"))
    assert commands.push_settings(stack, session, settings)
    assert session.settings == settings
    assert sorted(e[1] for e in rec.of("fitted")) == ["soil_ph", "yield_kg"]
    plan = fit(harvest_table.data, session.chosen(), settings)
    for label in ("yield_kg", "soil_ph"):
        assert session.fitted_column(label).pooled.params == plan[label].pooled.params
    # the sample data's README gives the yield_kg figures fitted on the training rows
    p = session.fitted_column("yield_kg").pooled.params
    assert p["mean"] == pytest.approx(75.54385054488843, rel=1e-12)
    assert p["sd"] == pytest.approx(36.650738430940336, rel=1e-12)
    stack.undo()
    assert session.settings == FitSettings()
    assert session.fitted_column("yield_kg").pooled.n == describe(session.values("yield_kg")).count


def test_grouping_by_a_scaled_column_is_refused(session, stack):
    with pytest.raises(ScalewrightError, match="no column"):
        commands.push_settings(stack, session, FitSettings(group_by="nowhere"))
    commands.set_method(stack, session, ["soil_ph"], "zscore")
    with pytest.raises(ScalewrightError, match="grouping column"):
        commands.push_settings(stack, session, FitSettings(group_by="soil_ph"))
    assert stack.count() == 1
    assert commands.push_settings(stack, session, FitSettings(group_by="orchard"))
    fc = session.fitted_column("soil_ph")
    assert len(fc.groups) == 6
    assert any("group" in w for w in session.warnings("soil_ph"))


def test_grouped_scaled_values_use_each_rows_group(session, harvest_table, stack):
    commands.set_method(stack, session, ["soil_ph"], "zscore")
    commands.push_settings(stack, session, FitSettings(group_by="orchard"))
    from scalewright.engine import apply

    expected, _ = apply(harvest_table.data, session.plan())
    got = session.scaled_values("soil_ph")
    np.testing.assert_allclose(got, expected["soil_ph"].to_numpy(float), equal_nan=True)
    np.testing.assert_allclose(
        session.scaled_values("soil_ph", slice(100, 200)), got[100:200], equal_nan=True
    )


def test_suggest_is_one_undoable_step_with_reasons(session, stack):
    reasons = commands.apply_suggestions(
        stack, session, ["yield_kg", "pest_trap_count", "tree_code"]
    )
    assert set(reasons) == {"yield_kg", "pest_trap_count"}
    assert "Box-Cox" in reasons["yield_kg"]
    assert session.choice("yield_kg") == ColumnChoice("boxcox", {"standardize": True})
    assert session.choice("pest_trap_count").method == "maxabs"
    assert stack.count() == 1
    stack.undo()
    assert session.choice("yield_kg").method == "none"


def test_histogram_bars_map_one_to_one(session, stack):
    """The scaled histogram has the same counts on edges mapped through the fit."""
    values = session.values("yield_kg")
    h = session.histogram("yield_kg")
    assert h.counts.sum() == np.isfinite(values).sum()
    for method in ("minmax", "zscore", "log", "boxcox", "yeojohnson", "robust"):
        commands.set_method(stack, session, ["yield_kg"], method)
        fc = session.fitted_column("yield_kg")
        edges = session.scaled_edges("yield_kg")
        np.testing.assert_allclose(edges, mapped_edges(h.edges, fc))
        # counting the scaled values between scaled edge i and i+1 gives bar i's count
        scaled = fc.forward(values)
        scaled = scaled[np.isfinite(scaled)]
        recount = np.histogram(scaled, bins=edges)[0]
        np.testing.assert_array_equal(recount, h.counts, err_msg=method)
    # the histogram itself is made once from the values
    assert session.histogram("yield_kg") is h
    np.testing.assert_array_equal(h.counts, histogram(values, session.bins).counts)


def test_range_info_in_both_units(session, stack):
    commands.set_method(stack, session, ["yield_kg"], "zscore")
    values = session.values("yield_kg")
    fc = session.fitted_column("yield_kg")
    info = session.range_info("yield_kg", 50.0, 100.0, scaled=False)
    assert info.count == np.count_nonzero((values >= 50) & (values <= 100))
    assert info.scaled_low == pytest.approx(float(fc.forward(np.array([50.0]))[0]))
    # the same range given in scaled units gives the same values
    back = session.range_info("yield_kg", info.scaled_low, info.scaled_high, scaled=True)
    assert back.low == pytest.approx(50.0)
    assert back.high == pytest.approx(100.0)
    assert back.count == info.count


def test_scaled_figures_match_describe_of_scaled_values(session, stack):
    for method in ("minmax", "zscore", "robust", "log", "boxcox"):
        commands.set_method(stack, session, ["yield_kg"], method)
        fig = session.scaled_figures("yield_kg")
        d = describe(session.fitted_column("yield_kg").forward(session.values("yield_kg")))
        assert fig.n == d.count and fig.missing == d.missing
        for name in ("mean", "sd", "min", "max", "skewness"):
            assert getattr(fig, name) == pytest.approx(getattr(d, name), rel=1e-9, abs=1e-12), (
                method,
                name,
            )


def test_fit_error_is_reported_not_raised(session, stack):
    # Box-Cox needs values above 0; pest_trap_count is mostly zeros
    commands.set_method(stack, session, ["pest_trap_count"], "boxcox")
    err = session.fit_error("pest_trap_count")
    assert err and "Yeo-Johnson" in err
    assert err.startswith("column 'pest_trap_count': ")
    # the window names the column already, so the warning drops that part
    assert session.warnings("pest_trap_count") == [err.removeprefix("column 'pest_trap_count': ")]
    assert session.problems() == {"pest_trap_count": err}
    assert np.isnan(session.scaled_edges("pest_trap_count")).all()
    with pytest.raises(ScalewrightError):
        session.plan()


def test_loading_a_project_is_one_batched_update(harvest_table):
    s = Session()
    rec = Recorder(s)
    s.load_table(
        harvest_table,
        choices={"yield_kg": ColumnChoice("zscore"), "gone": ColumnChoice("minmax")},
        settings=FitSettings(fit_where=("split", "train")),
        project_path="/tmp/x.swproj",
    )
    assert rec.of("table_loaded") == [("table_loaded",)]
    assert rec.of("choices") == []  # no per-column events while loading
    assert s.choice("yield_kg").method == "zscore"
    assert "gone" not in s.choices
    assert s.fitted_column("yield_kg").pooled.n < describe(s.values("yield_kg")).count
    assert not s.dirty
    assert str(s.project_path) == "/tmp/x.swproj"


def test_selection_and_dirty_events(session, stack):
    rec = Recorder(session)
    session.set_selection(["yield_kg", "soil_ph", "no_such_column"])
    assert session.selection == ["yield_kg", "soil_ph"]
    assert session.current == "yield_kg"
    session.set_selection(["yield_kg", "soil_ph"])  # same: no event
    assert rec.of("selection") == [("selection", ["yield_kg", "soil_ph"])]
    commands.set_method(stack, session, ["yield_kg"], "zscore")
    assert rec.of("dirty") == [("dirty", True)]
    session.set_dirty(False)
    assert rec.of("dirty")[-1] == ("dirty", False)


def test_group_values_differing_only_in_spaces_are_one_group(stack, tmp_path):
    # Group keys are canonical text (engine.value_key): ' A' and 'A' are one group, in the
    # window's fit and in its per-row scaled values alike.
    import pandas as pd

    from scalewright import io as swio
    from scalewright.engine import apply

    data = pd.DataFrame(
        {
            "g": pd.array(["A", " A", "B", "B", "A", " A"], dtype="str"),
            "x": [1.0, 2.0, 10.0, 30.0, 3.0, 4.0],
        }
    )
    kinds = {"g": swio.ColumnKind.TEXT, "x": swio.ColumnKind.NUMBER}
    s = Session()
    s.load_table(swio.Table(data, ["g", "x"], kinds, tmp_path / "t.csv", swio.ReadOptions()))
    commands.set_method(stack, s, ["x"], "zscore")
    commands.push_settings(stack, s, FitSettings(group_by="g"))
    assert sorted(s.fitted_column("x").groups) == ["A", "B"]
    expected, _ = apply(data, s.plan())
    np.testing.assert_allclose(s.scaled_values("x"), expected["x"].to_numpy(float))
    # one group of four values 1..4: mean 2.5
    assert s.fitted_column("x").groups["A"].params["mean"] == 2.5


# ---------------------------------------------------------------- fits in the background


class HeldCalls:
    """A fit runner that keeps each call until the test lets it run (in order)."""

    def __init__(self) -> None:
        self.calls: list[tuple] = []

    def __call__(self, work, deliver) -> None:
        self.calls.append((work, deliver))

    def run_all(self) -> None:
        calls, self.calls = self.calls, []
        for work, deliver in calls:
            deliver(work())


@pytest.fixture
def held(session):
    runner = HeldCalls()
    session.fit_runner = runner
    session.background_values = 100  # the sample's 2,412 rows count as large
    return runner


def test_a_slow_fit_of_a_large_column_waits_for_the_runner(session, stack, held, harvest_table):
    rec = Recorder(session)
    before = session.fit_count
    commands.set_method(stack, session, ["yield_kg"], "boxcox")
    assert len(held.calls) == 1 and session.fit_count == before
    assert session.fitting("yield_kg")
    # meanwhile the display calls say "nothing yet" instead of fitting on this thread
    assert session.fitted_column("yield_kg") is None
    assert session.fit_error("yield_kg") is None and session.warnings("yield_kg") == []
    assert np.isnan(session.scaled_edges("yield_kg")).all()
    assert session.scaled_figures("yield_kg") is None
    assert np.isnan(session.scaled_values("yield_kg", slice(0, 5))).all()
    assert session.describe_fit("yield_kg") == "Fitting…"
    assert np.isnan(session.range_info("yield_kg", 50, 80, scaled=False).scaled_low)
    assert session.fit_count == before
    held.run_all()
    assert not session.fitting("yield_kg") and session.fit_count == before + 1
    assert rec.of("fitted") == [("fitted", "yield_kg"), ("fitted", "yield_kg")]
    expected = fit_column(
        column_values(harvest_table.data, "yield_kg"),
        ColumnChoice("boxcox"),
        column="yield_kg",
    )
    got = session.fitted_column("yield_kg")
    assert got.pooled.params["lambda"] == expected.pooled.params["lambda"]
    h = session.histogram("yield_kg")
    np.testing.assert_array_equal(session.scaled_edges("yield_kg"), mapped_edges(h.edges, expected))
    # the figures came with the fit, computed from the scaled values
    scaled = expected.forward(column_values(harvest_table.data, "yield_kg"))
    figures = session.scaled_figures("yield_kg")
    assert figures.mean == pytest.approx(np.nanmean(scaled), rel=1e-12)
    assert figures.n == int(np.isfinite(scaled).sum())


def test_quick_methods_and_small_columns_are_fitted_at_once(session, stack, held):
    commands.set_method(stack, session, ["yield_kg"], "zscore")
    assert held.calls == [] and session.fitted_column("yield_kg") is not None
    session.background_values = 10**9
    commands.set_method(stack, session, ["soil_ph"], "boxcox")
    assert held.calls == [] and session.fitted_column("soil_ph") is not None


def test_writing_does_not_wait_for_a_background_fit(session, stack, held):
    commands.set_method(stack, session, ["yield_kg"], "yeojohnson")
    assert session.fitting("yield_kg")
    assert session.problems() == {}  # fits at once, as saving and exporting must
    lam = session.plan().columns["yield_kg"].pooled.params["lambda"]
    assert not session.fitting("yield_kg")
    rec = Recorder(session)
    held.run_all()  # the late result changes nothing, and says so once
    assert session.plan().columns["yield_kg"].pooled.params["lambda"] == lam
    assert rec.of("fitted") == [("fitted", "yield_kg")]


def test_a_late_fit_from_before_a_settings_change_is_dropped(session, stack, held):
    commands.set_method(stack, session, ["yield_kg"], "robust")
    commands.push_settings(stack, session, FitSettings(("split", "train"), None))
    assert len(held.calls) == 2  # the old fit, and the refit on the training rows
    rec = Recorder(session)
    old_work, old_deliver = held.calls.pop(0)
    old_deliver(old_work())
    assert session.fitting("yield_kg") and rec.of("fitted") == []
    held.run_all()
    fc = session.fitted_column("yield_kg")
    assert fc.pooled.n < session.summary("yield_kg").count  # fitted on the training rows only


def test_switching_on_before_a_fit_lands_shows_the_latest_choice(session, stack, held):
    commands.set_method(stack, session, ["yield_kg"], "boxcox")
    commands.set_method(stack, session, ["yield_kg"], "yeojohnson")
    rec = Recorder(session)
    held.run_all()
    assert session.choice("yield_kg").method == "yeojohnson"
    assert session.fitted_column("yield_kg").method == "yeojohnson"
    assert rec.of("fitted") == [("fitted", "yield_kg")]  # only the current choice's landing
    stack.undo()  # back to Box-Cox: its fit already landed, no fit waits
    assert not session.fitting("yield_kg")
    # only the two landed fits' scaled figures are held (made after the bars are drawn)
    assert [deliver.__qualname__.split(".")[1] for _, deliver in held.calls] == [
        "_figures_in_background",
        "_figures_in_background",
    ]
    assert session.fitted_column("yield_kg").method == "boxcox"


def test_scaled_figures_follow_the_landed_fit_in_their_own_job(session, stack, held):
    """The scaled bars need only the fit; the figures under them need every scaled value,
    so they are made in a second job and announced when they land."""
    commands.set_method(stack, session, ["yield_kg"], "yeojohnson")
    rec = Recorder(session)
    held.run_all()  # the fit lands: bars can be drawn, the figures are on their way
    assert session.fitted_column("yield_kg") is not None
    assert not np.isnan(session.scaled_edges("yield_kg")).any()
    assert session.scaled_figures_waiting("yield_kg") and len(held.calls) == 1
    held.run_all()
    assert not session.scaled_figures_waiting("yield_kg")
    assert rec.of("scaled_figures_ready") == [("scaled_figures_ready", "yield_kg")]
    scaled = session.fitted_column("yield_kg").forward(session.values("yield_kg"))
    figures = session.scaled_figures("yield_kg")  # the ones that landed, not made again
    assert figures.mean == pytest.approx(np.nanmean(scaled), rel=1e-12)  # numpy
    assert figures.n == int(np.isfinite(scaled).sum())


def test_column_facts_are_what_the_session_would_compute(harvest_table):
    from scalewright.session import column_facts

    facts = column_facts(harvest_table)
    numbers = [c for c in harvest_table.data.columns if str(harvest_table.kinds[c]) == "number"]
    assert sorted(facts) == sorted(numbers)
    x = column_values(harvest_table.data, "yield_kg")
    np.testing.assert_array_equal(facts["yield_kg"].values, x, strict=True)
    np.testing.assert_array_equal(facts["yield_kg"].histogram.counts, histogram(x, 30).counts)
    assert facts["yield_kg"].summary == describe(x)
    s = Session()
    s.load_table(harvest_table, facts=facts)
    assert s.values("yield_kg") is facts["yield_kg"].values  # used, not computed again
    assert s.summary("yield_kg") is facts["yield_kg"].summary
    assert s.suggestion("yield_kg") is facts["yield_kg"].suggestion
    # the number of different values, for "Fit on rows where", is counted there too
    assert facts.distinct["split"] == harvest_table.data["split"].nunique() == 2
    assert "tree_code" not in facts.distinct  # identifiers cannot choose rows
    assert s.distinct_count("split") == 2


@pytest.mark.parametrize("method", ["zscore", "minmax", "maxabs", "robust", "decimal"])
def test_scaled_figures_of_straight_lines_with_a_large_offset(tmp_path, method):
    """Values near 1e16: the slope must not come from f(1) - f(0), which cancels away."""
    import pandas as pd
    from tests.gui.conftest import make_table

    rng = np.random.default_rng(3)
    x = 1e16 + rng.integers(0, 1_000_000, 500).astype(np.float64) * 16.0
    s = Session()
    s.load_table(make_table(pd.DataFrame({"x": x}), tmp_path / "big_offset.csv"))
    s.set_choices({"x": ColumnChoice(method)})
    fig = s.scaled_figures("x")
    d = describe(s.fitted_column("x").forward(s.values("x")))
    assert fig.n == d.count
    for name in ("mean", "sd", "min", "max"):
        got, want = getattr(fig, name), getattr(d, name)
        assert got == pytest.approx(want, rel=1e-6, abs=1e-6 * d.sd), name
