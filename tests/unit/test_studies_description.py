"""Study descriptions: key paths, units, distributions, samplers and bad input.

No solver runs here. References: Latin hypercube stratification as defined by McKay,
Beckman & Conover 1979, Technometrics 21, 239-245; distribution quantiles from
scipy.stats (the engine the samplers map through); unit conversions are exact SI
definitions (1 t = 1000 kg, 1 kt = 1852/3600 m/s, T[K] = T[degC] + 273.15).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from scipy import stats

from heatstack.errors import InputError, UnitError
from heatstack.studies import (
    LogNormal,
    Normal,
    Parameter,
    Sampling,
    Study,
    Triangular,
    TruncatedNormal,
    Uniform,
    load_study,
    plan_study,
    study_from_mapping,
)
from heatstack.studies.paths import format_path, parse_path

DEMO = Path(__file__).resolve().parents[2] / "examples" / "demo_rto.toml"
MASS = "duty.phases[0].events[0].aircraft.mass"
KNOT = 1852.0 / 3600.0  # m/s, exact by definition of the international nautical mile


def lhs(parameters, cases=20, seed=3, **kw):
    return Study(DEMO, parameters, Sampling("latin_hypercube", cases, seed), **kw)


def test_path_round_trip_with_indices_and_quoted_keys():
    tokens = parse_path('output.limits."inboard bead seat"')
    assert tokens == ("output", "limits", "inboard bead seat")
    assert parse_path("duty.phases[2].environment.ambient_temperature") == (
        "duty",
        "phases",
        2,
        "environment",
        "ambient_temperature",
    )
    assert format_path(tokens) == 'output.limits."inboard bead seat"'
    assert parse_path(format_path(parse_path(MASS))) == parse_path(MASS)


@pytest.mark.parametrize("bad", ["", "duty..mass", "duty.phases[x]", "duty.phases[0]mass"])
def test_malformed_paths_are_rejected(bad):
    with pytest.raises(InputError, match="path"):
        parse_path(bad)


def test_units_follow_the_base_value_at_the_path():
    plan = plan_study(
        lhs(
            [
                Parameter(MASS, Normal("70 t", "2 t"), name="mass"),
                Parameter("duty.phases[0].events[0].reject_speed", Uniform("120 kt", "140 kt"), name="speed"),
                Parameter(
                    [f"duty.phases[{k}].environment.ambient_temperature" for k in range(3)],
                    Normal("25 degC", "3 degC"),
                    name="ambient",
                ),
                Parameter("assembly.fuse_plugs[0].tolerance", Uniform("2 K", "4 K"), name="tol"),
            ]
        )
    )
    mass, speed, ambient, tol = plan.parameters
    assert (mass.dimension, speed.dimension, ambient.dimension) == ("mass", "speed", "temperature")
    assert tol.dimension == "temperature_difference"
    assert mass.distribution.mean() == pytest.approx(70000.0)
    assert mass.distribution.std() == pytest.approx(2000.0)
    assert speed.distribution.support() == pytest.approx((120 * KNOT, 140 * KNOT))
    # a temperature spread given in degC is a difference: 3 degC = 3 K, not 276.15 K
    assert ambient.distribution.mean() == pytest.approx(298.15)
    assert ambient.distribution.std() == pytest.approx(3.0)
    # one value written at all three paths of the parameter
    row = plan.case_mapping(0)
    temps = {row["duty"]["phases"][k]["environment"]["ambient_temperature"] for k in range(3)}
    assert temps == {plan.samples[0, 2]}
    assert row["duty"]["phases"][0]["events"][0]["aircraft"]["mass"] == plan.samples[0, 0]


def test_absent_design_key_is_accepted_with_its_dimension():
    plan = plan_study(lhs([Parameter("assembly.design.rotor_stator_clamped", Uniform("2400 W/(m^2*K)", 3600.0))]))
    (p,) = plan.parameters
    assert p.dimension == "heat_transfer_coefficient" and p.base_values == (None,)
    assert np.all((plan.samples >= 2400.0) & (plan.samples <= 3600.0))


def test_same_seed_same_samples_other_seed_other_samples():
    params = [
        Parameter(MASS, Normal("70 t", "2 t")),
        Parameter("assembly.fuse_plugs[1].release_temperature", Uniform("174 degC", "180 degC")),
    ]
    a = plan_study(lhs(params, seed=11)).samples
    b = plan_study(lhs(params, seed=11)).samples
    c = plan_study(lhs(params, seed=12)).samples
    assert np.array_equal(a, b)
    assert not np.allclose(a, c)
    r1 = plan_study(Study(DEMO, params, Sampling("random", 20, 11))).samples
    r2 = plan_study(Study(DEMO, params, Sampling("random", 20, 11))).samples
    assert np.array_equal(r1, r2) and not np.allclose(r1, a)


def test_latin_hypercube_puts_one_case_in_each_stratum():
    # McKay et al. 1979: each of the n equal-probability strata of every input holds one sample
    n = 40
    plan = plan_study(
        lhs(
            [
                Parameter(MASS, TruncatedNormal("70 t", "3 t", "62 t", "76 t"), name="m"),
                Parameter("duty.phases[0].events[0].reject_speed", Triangular("120 kt", "132 kt", "140 kt")),
                Parameter("duty.phases[0].events[0].aircraft.spoiler_time", LogNormal("1.5 s", 0.1)),
            ],
            cases=n,
        )
    )
    for j, p in enumerate(plan.parameters):
        u = p.distribution.cdf(plan.samples[:, j])
        assert sorted(np.floor(u * n).astype(int)) == list(range(n))


def test_samples_follow_the_distributions():
    # 4000 Latin hypercube draws: quantiles match scipy's ppf closely (Kolmogorov-Smirnov)
    n = 4000
    dists = [
        Normal("70 t", "2 t"),
        Uniform("60 t", "80 t"),
        TruncatedNormal("70 t", "5 t", "65 t", "72 t"),
        Triangular("60 t", "75 t", "80 t"),
        LogNormal("70 t", 0.05),
    ]
    plan = plan_study(lhs([Parameter(MASS, d, name=f"m{k}") for k, d in enumerate(dists)], cases=n))
    for j, p in enumerate(plan.parameters):
        ks = stats.kstest(plan.samples[:, j], p.distribution.cdf)
        assert ks.statistic < 1.0 / n + 1e-9  # stratified: no more than one stratum off
    assert plan.samples[:, 2].min() >= 65000.0 and plan.samples[:, 2].max() <= 72000.0
    assert np.median(plan.samples[:, 4]) == pytest.approx(70000.0, rel=1e-3)


def test_full_grid_has_every_combination_first_parameter_slowest():
    plan = plan_study(
        Study(
            DEMO,
            [
                Parameter(MASS, values=["60 t", "70 t"]),
                Parameter("assembly.design.rotors", values=[3, 4, 5]),
                Parameter("assembly.design.heat_shield", values=[True, False]),
            ],
            Sampling("grid"),
        )
    )
    assert plan.samples.shape == (12, 3)
    assert plan.samples[:6, 0].tolist() == [60000.0] * 6 and plan.samples[6:, 0].tolist() == [70000.0] * 6
    assert plan.samples[:2, 1].tolist() == [3.0, 3.0]
    row = plan.case_mapping(1)
    assert row["assembly"]["design"]["rotors"] == 3 and isinstance(row["assembly"]["design"]["rotors"], int)
    assert row["assembly"]["design"]["heat_shield"] is False


def test_speed_overrides_are_written_into_every_case():
    plan = plan_study(lhs([Parameter(MASS, Normal("70 t", "2 t"))], cell_size="9 mm", accuracy="0.8 K"))
    row = plan.case_mapping(3)
    assert row["assembly"]["cell_size"] == pytest.approx(0.009)
    assert row["solver"]["accuracy"] == pytest.approx(0.8)
    assert plan.cell_size == pytest.approx(0.009) and plan.accuracy == pytest.approx(0.8)


def test_fingerprint_ignores_the_title_but_not_the_seed():
    p = [Parameter(MASS, Normal("70 t", "2 t"))]
    a = plan_study(lhs(p, seed=1, title="one")).fingerprint
    assert a == plan_study(lhs(p, seed=1, title="two")).fingerprint
    assert a != plan_study(lhs(p, seed=2)).fingerprint


# ---------------------------------------------------------------------------- bad input


def test_unknown_path_names_the_closest_existing_path():
    with pytest.raises(
        InputError, match=r"does not exist in the base case; did you mean 'duty.phases\[0\].events\[0\].aircraft.mass'"
    ):
        plan_study(lhs([Parameter("duty.phases[0].events[0].aircraft.mas", Normal("70 t", "2 t"))]))


def test_index_out_of_range_names_the_closest_path():
    with pytest.raises(
        InputError,
        match=r"study.parameters\[0\].path: 'duty.phases\[7\].environment.ambient_temperature' does not exist.*did you mean",
    ):
        plan_study(lhs([Parameter("duty.phases[7].environment.ambient_temperature", Normal("25 degC", "2 K"))]))


def test_absent_key_the_case_does_not_accept_is_refused():
    with pytest.raises(
        InputError,
        match=r"study.parameters\[0\].path: 'assembly.design.rotor_stator_clampd'.*did you mean 'assembly.design.rotor_stator_clamped'",
    ):
        plan_study(lhs([Parameter("assembly.design.rotor_stator_clampd", Uniform(2000.0, 3000.0))]))


def test_path_to_a_table_is_refused():
    with pytest.raises(InputError, match="is a table or list"):
        plan_study(lhs([Parameter("duty.phases[0].environment", Uniform(1.0, 2.0))]))


@pytest.mark.parametrize(
    ("distribution", "message"),
    [
        (Normal("70 t", "-2 t"), r"distribution.std: must be > 0"),
        (Uniform("80 t", "60 t"), r"distribution.high: must be above low"),
        (Triangular("60 t", "90 t", "80 t"), r"distribution.mode: must lie between low and high"),
        (TruncatedNormal("70 t", "2 t", "75 t", "65 t"), r"distribution.high: must be above low"),
        (LogNormal("-70 t", 0.1), r"distribution.median: must be > 0"),
        (LogNormal("70 t", 0.0), r"distribution.log_std: must be > 0"),
    ],
)
def test_invalid_distribution_parameters_name_the_field(distribution, message):
    with pytest.raises(InputError, match=r"study.parameters\[0\]\." + message):
        plan_study(lhs([Parameter(MASS, distribution)]))


def test_unit_of_the_wrong_dimension_names_the_field():
    with pytest.raises(UnitError, match=r"study.parameters\[0\].distribution.mean: expected mass"):
        plan_study(lhs([Parameter(MASS, Normal("70 m", "2 t"))]))


def test_grid_needs_values_and_random_needs_cases_and_seed():
    with pytest.raises(InputError, match="grid sampling needs a list of values"):
        plan_study(Study(DEMO, [Parameter(MASS, Normal("70 t", "2 t"))], Sampling("grid")))
    with pytest.raises(InputError, match="study.seed: required"):
        plan_study(Study(DEMO, [Parameter(MASS, Normal("70 t", "2 t"))], Sampling("random", 10)))
    with pytest.raises(InputError, match="study.cases: required"):
        plan_study(Study(DEMO, [Parameter(MASS, Normal("70 t", "2 t"))], Sampling("latin_hypercube", None, 1)))
    with pytest.raises(InputError, match="did you mean 'latin_hypercube'"):
        plan_study(Study(DEMO, [Parameter(MASS, Normal("70 t", "2 t"))], Sampling("latin_hypercub", 5, 1)))
    with pytest.raises(InputError, match="the grid has 2 combinations, not 3"):
        plan_study(Study(DEMO, [Parameter(MASS, values=["60 t", "70 t"])], Sampling("grid", 3)))


def test_unknown_output_name_is_refused_with_a_suggestion():
    with pytest.raises(
        InputError, match=r"study.outputs\[0\]: no probe or series named 'sensr'; did you mean 'sensor'"
    ):
        plan_study(lhs([Parameter(MASS, Normal("70 t", "2 t"))], outputs=["sensr"]))


def test_a_value_the_case_refuses_is_caught_before_any_case_runs():
    # an integer field given a continuous distribution: the case parser refuses 3.5 rotors
    with pytest.raises(InputError, match="every parameter at its median is not valid.*rotors"):
        plan_study(lhs([Parameter("assembly.design.rotors", Uniform(3.0, 4.0))]))


# ---------------------------------------------------------------------------- TOML layout


STUDY_TOML = """
[study]
title = "invented mass and ambient scatter (test)"
base_case = "demo_rto.toml"
method = "latin_hypercube"
cases = 16
seed = 5
cell_size = "10 mm"
accuracy = "0.5 K"
outputs = ["sensor", "fuse plug 1"]

[[study.parameters]]
path = "duty.phases[0].events[0].aircraft.mass"
name = "mass"
distribution = "truncated_normal"
mean = "64 t"
std = "3 t"
low = "58 t"
high = "70 t"

[[study.parameters]]
path = ["duty.phases[0].environment.ambient_temperature", "duty.phases[2].environment.ambient_temperature"]
name = "ambient"
values = ["10 degC", "25 degC", "40 degC"]
"""


def test_study_section_round_trip(tmp_path):
    import tomllib

    study = study_from_mapping(tomllib.loads(STUDY_TOML), DEMO)
    assert study.sampling == Sampling("latin_hypercube", 16, 5)
    assert isinstance(study.parameters[0].distribution, TruncatedNormal)
    plan = plan_study(study)
    assert plan.outputs == ("sensor", "fuse plug 1")
    # discrete values under Latin hypercube sampling: each value drawn with equal probability
    assert set(np.round(plan.samples[:, 1], 6)) == {283.15, 298.15, 313.15}
    (tmp_path / "demo_rto.toml").write_text(DEMO.read_text())
    (tmp_path / "s.toml").write_text(STUDY_TOML)
    again = plan_study(load_study(tmp_path / "s.toml"))
    assert np.array_equal(again.samples, plan.samples)


def test_study_section_unknown_keys_name_the_closest():
    import tomllib

    data = tomllib.loads(STUDY_TOML.replace("std =", "sdt ="))
    with pytest.raises(InputError, match=r"study.parameters\[0\].sdt: unknown key; did you mean 'std'"):
        study_from_mapping(data, DEMO)
    data = tomllib.loads(STUDY_TOML.replace("seed =", "sede ="))
    with pytest.raises(InputError, match=r"study.sede: unknown key; did you mean 'seed'"):
        study_from_mapping(data, DEMO)
    data = tomllib.loads(STUDY_TOML.replace('"truncated_normal"', '"truncated_norml"'))
    with pytest.raises(InputError, match=r"unknown distribution 'truncated_norml'; did you mean 'truncated_normal'"):
        study_from_mapping(data, DEMO)
    data = tomllib.loads(STUDY_TOML.replace('low = "58 t"\n', ""))
    with pytest.raises(InputError, match=r"study.parameters\[0\].low: missing"):
        study_from_mapping(data, DEMO)
