// rxtrain fit (fit/) and --sample-fit draws (sweep/study): synthetic lab
// data from known kinetics with seeded noise, against the statistics the
// method promises; the CSV reader's errors; the fitted case round trip.
// All kinetic data are invented for the tests.
#include "rxtrain/fit/fit.hpp"

#include <gsl/gsl_cdf.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <string>
#include <vector>

#include "input_error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/chem/thermo.hpp"
#include "rxtrain/fit/fit_case.hpp"
#include "rxtrain/fit/lab_data.hpp"
#include "rxtrain/sweep/case_path.hpp"
#include "rxtrain/sweep/sampling.hpp"
#include "rxtrain/sweep/study.hpp"

using namespace rxtrain;
using rxtrain::test::input_error;

namespace {

// A liquid, isothermal, first-order A => B lab tube (invented data):
// v0 = 1e-4 m3/s, X = 1 - exp(-k(T) V / v0) (Levenspiel, Chemical
// Reaction Engineering, 3rd ed., ch. 5). The case's A and Ea are the
// fit's first guesses; no T_ref.
constexpr const char* kLab = R"(title: first-order lab tube (invented data)
phase: liquid
species:
  - {id: A, mw: 0.1 kg/mol, density: 1000 kg/m3}
  - {id: B, mw: 0.1 kg/mol, density: 1000 kg/m3}
reactions:
  - id: r1
    equation: A => B
    rate: {A: 5.0e4, Ea: 58 kJ/mol}
    dH: 0
feed: {T: 420 K, P: 1 bar, flows: {A: 1 mol/s}}
key: A
train:
  - {type: pfr, id: L1, volume: 0.1 m3, heat: isothermal}
)";

constexpr double kTrueEa = 60e3;    // J/mol
constexpr double kTrueK420 = 2e-3;  // 1/s at 420 K
constexpr double kSd = 0.01;        // noise on X

double true_x(double T, double V) {
  const double k = kTrueK420 * std::exp(-kTrueEa / kGasConstant * (1 / T - 1 / 420.0));
  return 1 - std::exp(-k * V / 1e-4);
}

struct Lab {
  UnitParser units;
  Case c = load_case_from_string(kLab, "lab.yaml", units);
  sweep::CasePathTable table{c};
};

// 20 runs: 4 temperatures x 5 volumes, X with seeded normal noise.
fit::LabData lab_data(const Lab& lab, std::uint64_t seed, double T_lo = 400, double T_hi = 440) {
  fit::LabData d;
  d.file = "runs.csv";
  d.input_paths = {lab.table.find("feed.T", "t"), lab.table.find("train.L1.volume", "t")};
  d.input_names = {"feed.T", "train.L1.volume"};
  d.outputs = sweep::OutputSpec::parse("X", lab.c);
  int line = 2;
  for (int i = 0; i < 4; ++i)
    for (double V : {0.01, 0.03, 0.06, 0.1, 0.2}) {
      const double T = T_lo + (T_hi - T_lo) * i / 3.0;
      const double noise = kSd * sweep::standard_normal(seed, static_cast<std::uint64_t>(line), 0);
      d.inputs.push_back({T, V});
      d.measured.push_back({true_x(T, V) + noise});
      d.lines.push_back(line++);
    }
  return d;
}

fit::FitOptions free_a_ea(const Lab& lab) {
  fit::FitOptions o;
  o.free = {{lab.table.find("reactions.r1.rate.A", "t"), {}, {}},
            {lab.table.find("reactions.r1.rate.Ea", "t"), {}, {}}};
  o.jobs = 1;
  return o;
}

}  // namespace

TEST_CASE("a fit recovers known kinetics, its 95 % intervals cover the truth 91-99 % of the time",
          "[fit]") {
  // The t intervals of a nonlinear least-squares estimate are exact only
  // for a linear model; for a model this close to linear in its
  // parameters over the data's noise, the coverage of 200 seeded
  // replicates must fall within 91-99 % (binomial SD of a 95 % rate over
  // 200 trials: 1.5 %, so the band is about +-2.6 SD; seeds fixed, so the
  // check is deterministic).
  const Lab lab;
  const fit::FitOptions o = free_a_ea(lab);
  const fit::FitResult first = fit::run_fit(lab.c, lab.table, lab_data(lab, 1), o);
  REQUIRE(first.converged);
  // A is estimated as k at the data's mean temperature (420 K), where the
  // truth is 2e-3 1/s.
  REQUIRE(first.parameters[0].T_ref);
  CHECK(*first.parameters[0].T_ref == Approx(420.0).epsilon(1e-12));
  CHECK(first.parameters[0].ci_lo < kTrueK420);
  CHECK(first.parameters[0].ci_hi > kTrueK420);
  CHECK(first.parameters[1].ci_lo < kTrueEa);
  CHECK(first.parameters[1].ci_hi > kTrueEa);
  CHECK(first.dof == 18);
  CHECK(first.t95 == Approx(gsl_cdf_tdist_Pinv(0.975, 18)).epsilon(1e-10));
  // The residual SD estimates the noise's 0.01 (chi-square with 18 dof:
  // s/sigma within [0.55, 1.45] at a false-alarm rate far below 1e-4).
  CHECK(first.residual_sd[0] > 0.55 * kSd);
  CHECK(first.residual_sd[0] < 1.45 * kSd);

  int cover_k = 0, cover_ea = 0;
  const int replicates = 200;
  for (int rep = 0; rep < replicates; ++rep) {
    const fit::FitResult r =
        fit::run_fit(lab.c, lab.table, lab_data(lab, 1000 + static_cast<std::uint64_t>(rep)), o);
    cover_k += r.parameters[0].ci_lo < kTrueK420 && kTrueK420 < r.parameters[0].ci_hi;
    cover_ea += r.parameters[1].ci_lo < kTrueEa && kTrueEa < r.parameters[1].ci_hi;
  }
  INFO("k covered " << cover_k << ", Ea covered " << cover_ea << " of " << replicates);
  CHECK(cover_k >= 182);
  CHECK(cover_k <= 198);
  CHECK(cover_ea >= 182);
  CHECK(cover_ea <= 198);
}

TEST_CASE("the reference temperature takes the A-Ea correlation from above 0.99 to below 0.9",
          "[fit]") {
  const Lab lab;
  fit::FitOptions o = free_a_ea(lab);
  const fit::LabData d = lab_data(lab, 3);
  const fit::FitResult with_ref = fit::run_fit(lab.c, lab.table, d, o);
  o.reference_temperature = false;
  const fit::FitResult plain = fit::run_fit(lab.c, lab.table, d, o);
  INFO("plain " << plain.correlation(0, 1) << ", with T_ref " << with_ref.correlation(0, 1));
  CHECK(std::abs(plain.correlation(0, 1)) > 0.99);
  CHECK(std::abs(with_ref.correlation(0, 1)) < 0.9);
  // The same law either way: Ea agrees, and A exp(-Ea/(R 420 K)) is k(420 K).
  CHECK(plain.parameters[1].estimate == Approx(with_ref.parameters[1].estimate).epsilon(1e-4));
  CHECK(plain.parameters[0].estimate *
            std::exp(-plain.parameters[1].estimate / (kGasConstant * 420.0)) ==
        Approx(with_ref.parameters[0].estimate).epsilon(1e-4));
}

TEST_CASE("the fitted case is written in place with its T_ref and loads back", "[fit]") {
  const Lab lab;
  const fit::FitResult r = fit::run_fit(lab.c, lab.table, lab_data(lab, 5), free_a_ea(lab));
  const std::string text = fit::fitted_case_text(kLab, "lab.yaml", r, lab.units, "out.yaml");
  CHECK(text.find("title: first-order lab tube (invented data)") != std::string::npos);
  const Case back = load_case_from_string(text, "out.yaml", lab.units);
  const RateLaw& law = back.mechanism.reactions()[0].rate;
  REQUIRE(law.T_ref);
  CHECK(*law.T_ref == Approx(420.0).epsilon(1e-15));
  CHECK(law.A == Approx(r.parameters[0].estimate).epsilon(1e-15));
  CHECK(law.Ea == Approx(r.parameters[1].estimate).epsilon(1e-15));
}

TEST_CASE("lab data errors are located input errors", "[fit]") {
  const Lab lab;
  const auto read = [&](const std::string& csv) {
    return input_error(
        [&] { (void)fit::read_lab_data(csv, "runs.csv", lab.c, lab.table, lab.units); });
  };
  CHECK_THAT(read("feed.T,train.L1.volum,X\n400,0.1,0.5\n"),
             Catch::Contains("runs.csv:1:8: error: unknown column \"train.L1.volum\"") &&
                 Catch::Contains("train.L1.volume"));
  CHECK_THAT(read("feed.T,X\n400 bar,0.5\n"),
             Catch::Contains("runs.csv:2:1: error: column feed.T needs K"));
  CHECK_THAT(read("feed.T,X\n400,nan\n"), Catch::Contains("runs.csv:2:5: error"));
  CHECK_THAT(read("feed.T,X\nbar,-\n400,0.5\n"),
             Catch::Contains("runs.csv:2:1: error: unit \"bar\""));
  CHECK_THAT(read("feed.T\n400\n"), Catch::Contains("names no measured output"));
  CHECK_THAT(read("feed.T,X\n400\n"), Catch::Contains("runs.csv:2:1: error: this run has 1 cells"));
  // Units from the unit line and from cells: 126.85 degC is 400 K.
  const fit::LabData d = fit::read_lab_data(
      "# comment\nfeed.T,X,sigma.X\ndegC,-,-\n126.85,0.5,0.01\n"
      "400 K,0.6,0.02\n",
      "runs.csv", lab.c, lab.table, lab.units);
  REQUIRE(d.runs() == 2);
  CHECK(d.inputs[0][0] == Approx(400.0).epsilon(1e-12));
  CHECK(d.inputs[1][0] == Approx(400.0).epsilon(1e-12));
  CHECK(d.lines[1] == 5);
  REQUIRE(d.weighted());
  CHECK(d.sigma[1][0] == 0.02);
  // Two runs cannot fit two parameters with a degree of freedom to spare.
  CHECK_THAT(input_error([&] { (void)fit::run_fit(lab.c, lab.table, d, free_a_ea(lab)); }),
             Catch::Contains("at least 3 are needed"));
}

TEST_CASE("sample-fit draws have the fit's mean and covariance", "[fit]") {
  // 20,000 draws of (ln A, Ea, order): the mean by Hotelling's chi-square
  // statistic n (m - mu)' S^-1 (m - mu) ~ chi2(p), the covariance by the
  // likelihood-ratio statistic n [tr(S0^-1 S) - ln det(S0^-1 S) - p] ~
  // chi2(p (p + 1) / 2) (Anderson, An Introduction to Multivariate
  // Statistical Analysis, 3rd ed., ch. 5 and 10; large-sample forms), each
  // against GSL's chi-square quantile at a false-alarm rate of 1e-4; seed 11.
  const Lab lab;
  Case c = lab.c;
  const sweep::CasePathTable table(c);
  const std::string json = R"({"parameters": [
      {"path": "reactions.r1.rate.A", "scale": "log", "estimate": 2e-3, "T_ref": 420},
      {"path": "reactions.r1.rate.Ea", "scale": "linear", "estimate": 60000},
      {"path": "reactions.r1.rate.orders.A", "scale": "linear", "estimate": 1.0}],
    "covariance": [[0.0004, 3.0, 0.0002], [3.0, 250000, 0.5], [0.0002, 0.5, 0.0025]]})";
  const sweep::FittedDraws d = sweep::read_fitted_draws(json, "fit.json", table, c);
  // The case has no T_ref: A is rewritten as A exp(Ea/(R 420 K)) with the drawn Ea.
  REQUIRE(d.params[0].T_ref_fit == 420.0);
  REQUIRE(d.params[0].ea_param == 1);
  const int n = 20000, p = 3;
  Eigen::MatrixXd x(n, p);
  std::vector<double> v(p);
  for (int run = 0; run < n; ++run) {
    d.draw(11, static_cast<std::uint64_t>(run), 0, v);
    // Back to the fit's own scales: ln of A at 420 K.
    x(run, 0) = std::log(v[0] * std::exp(-v[1] / (kGasConstant * 420.0)));
    x(run, 1) = v[1];
    x(run, 2) = v[2];
  }
  Eigen::Vector3d mu(std::log(2e-3), 60000, 1.0);
  Eigen::Matrix3d S0;
  S0 << 0.0004, 3.0, 0.0002, 3.0, 250000, 0.5, 0.0002, 0.5, 0.0025;
  const Eigen::Vector3d m = x.colwise().mean();
  const Eigen::MatrixXd centred = x.rowwise() - m.transpose();
  const Eigen::Matrix3d S = centred.transpose() * centred / n;
  const double t2 = n * (m - mu).dot(S0.inverse() * (m - mu));
  const Eigen::Matrix3d Q = S0.inverse() * S;
  const double lr = n * (Q.trace() - std::log(Q.determinant()) - p);
  INFO("mean statistic " << t2 << ", covariance statistic " << lr);
  CHECK(t2 < gsl_cdf_chisq_Qinv(1e-4, p));
  CHECK(lr < gsl_cdf_chisq_Qinv(1e-4, p * (p + 1) / 2.0));
  // And the statistics are not trivially small: a wrong covariance fails.
  Eigen::Matrix3d wrong = S0;
  wrong(0, 0) *= 1.1;
  const Eigen::Matrix3d Qw = wrong.inverse() * S;
  CHECK(n * (Qw.trace() - std::log(Qw.determinant()) - p) >
        gsl_cdf_chisq_Qinv(1e-4, p * (p + 1) / 2.0));
}

TEST_CASE("lack of fit: replicates expose a wrong rate law, not a right one", "[fit]") {
  // The pure-error F test of a regression with replicated runs (Draper and
  // Smith, Applied Regression Analysis, 3rd ed., sect. 2.1): F = (SS_lack /
  // dof_lack) / (SS_pure / dof_pure), its p-value checked against GSL's F
  // distribution. Runs: 8 conditions x 3 replicates, noise SD 0.005, seed 21.
  const Lab lab;
  const auto data = [&](bool second_order) {
    fit::LabData d;
    d.file = "runs.csv";
    d.input_paths = {lab.table.find("feed.T", "t"), lab.table.find("train.L1.volume", "t")};
    d.input_names = {"feed.T", "train.L1.volume"};
    d.outputs = sweep::OutputSpec::parse("X", lab.c);
    int line = 2;
    for (double T : {400.0, 440.0})
      for (double V : {0.02, 0.05, 0.1, 0.2})
        for (int rep = 0; rep < 3; ++rep) {
          const double k = kTrueK420 * std::exp(-kTrueEa / kGasConstant * (1 / T - 1 / 420.0));
          // Second order in A with C_A0 = 1e4 mol/m3: X = Da / (1 + Da),
          // Da = k' tau C_A0 with k' C_A0 = k.
          const double Da = k * V / 1e-4;
          const double x = second_order ? Da / (1 + Da) : 1 - std::exp(-Da);
          d.inputs.push_back({T, V});
          d.measured.push_back(
              {x + 0.005 * sweep::standard_normal(21, static_cast<std::uint64_t>(line), 0)});
          d.lines.push_back(line++);
        }
    return d;
  };
  for (const bool wrong : {false, true}) {
    INFO((wrong ? "second-order data, first-order law" : "first-order data and law"));
    const fit::LabData d = data(wrong);
    const fit::FitResult r = fit::run_fit(lab.c, lab.table, d, free_a_ea(lab));
    REQUIRE(r.lack_of_fit);
    const auto& lof = *r.lack_of_fit;
    CHECK(lof.groups == 8);
    CHECK(lof.dof_pure == 16);
    CHECK(lof.dof_lack == 6);  // 24 - 2 - 16
    // The sums of squares from the runs, by hand (one output: weights 1/s
    // cancel in F).
    double ss_pure = 0, ss_res = 0;
    for (std::size_t g = 0; g < 8; ++g) {
      double mean = 0;
      for (std::size_t j = 0; j < 3; ++j) mean += d.measured[3 * g + j][0] / 3;
      for (std::size_t j = 0; j < 3; ++j) ss_pure += std::pow(d.measured[3 * g + j][0] - mean, 2);
    }
    for (const auto& run : r.runs) ss_res += std::pow(*run.residual[0], 2);
    const double F = ((ss_res - ss_pure) / 6) / (ss_pure / 16);
    CHECK(lof.F == Approx(F).epsilon(1e-9));
    CHECK(lof.p_value == Approx(gsl_cdf_fdist_Q(F, 6, 16)).epsilon(1e-9));
    if (wrong)
      CHECK(lof.p_value < 1e-3);
    else
      CHECK(lof.p_value > 0.01);
  }
}

namespace {

// Two parallel first-order reactions on a catalyst in an isothermal liquid
// tube (invented data): A => B (k1) and A => C (k2), rates per kg of
// catalyst, k_j C_A. With v0 = 1e-4 m3/s and W kg of catalyst,
// F_A = F_A0 exp(-(k1 + k2) W / v0) and each reaction's extent is its
// share of what reacted, xi_j = k_j / (k1 + k2) * F_A0 * (1 - exp(-(k1 +
// k2) W / v0)) (Levenspiel, Chemical Reaction Engineering, 3rd ed., ch. 7,
// parallel reactions); the mean rate over the bed is xi_j / W.
constexpr const char* kParallel = R"(title: parallel lab bed (invented data)
phase: liquid
species:
  - {id: A, mw: 0.1 kg/mol, density: 1000 kg/m3}
  - {id: B, mw: 0.1 kg/mol, density: 1000 kg/m3}
  - {id: C, mw: 0.1 kg/mol, density: 1000 kg/m3}
reactions:
  - id: r1
    equation: A => B
    rate: {per: catalyst, A: 4.0e-5 m3/(kg*s), Ea: 50 kJ/mol, T_ref: 420 K}
    dH: 0
  - id: r2
    equation: A => C
    rate: {per: catalyst, A: 1.0e-5 m3/(kg*s), Ea: 70 kJ/mol, T_ref: 420 K}
    dH: 0
feed: {T: 420 K, P: 1 bar, flows: {A: 1 mol/s}}
key: A
train:
  - {type: pfr, id: L1, catalyst: 2 kg, bulk_density: 1000 kg/m3, heat: isothermal}
)";

double k_parallel(double k420, double Ea, double T) {
  return k420 * std::exp(-Ea / kGasConstant * (1 / T - 1 / 420.0));
}

// The mean rate (mol/(kg s)) of reaction `which` (0: r1, 1: r2) over W kg.
double mean_rate_parallel(int which, double T, double W) {
  const double k1 = k_parallel(4.0e-5, 50e3, T), k2 = k_parallel(1.0e-5, 70e3, T);
  const double reacted = 1.0 * (1 - std::exp(-(k1 + k2) * W / 1e-4));
  return (which == 0 ? k1 : k2) / (k1 + k2) * reacted / W;
}

}  // namespace

TEST_CASE("a reactor's mean rate of each reaction is its extent per kg, read from the flows",
          "[fit]") {
  const UnitParser units;
  const Case c = load_case_from_string(kParallel, "parallel.yaml", units);
  const sweep::OutputSpec out = sweep::OutputSpec::parse("L1.rate.r1,L1.rate.r2", c);
  CHECK(out.units() == std::vector<std::string>{"mol/(kg*s)", "mol/(kg*s)"});
  const TrainResult r = run_train(c, TrainOptions{});
  for (int j = 0; j < 2; ++j) {
    const auto got = out.extract(static_cast<std::size_t>(j), r);
    REQUIRE(got);
    CHECK(*got == Approx(mean_rate_parallel(j, 420, 2)).epsilon(1e-7));
  }

  // A per-volume rate is per m3 of the stage.
  const std::string per_volume = std::string(kParallel).replace(
      std::string(kParallel).find("rate: {per: catalyst, A: 4.0e-5 m3/(kg*s)"),
      std::string("rate: {per: catalyst, A: 4.0e-5 m3/(kg*s)").size(), "rate: {A: 4.0e-2 1/s");
  const Case v = load_case_from_string(per_volume, "parallel.yaml", units);
  const sweep::OutputSpec out_v = sweep::OutputSpec::parse("L1.rate.r1", v);
  CHECK(out_v.units() == std::vector<std::string>{"mol/(m3*s)"});
  const TrainResult rv = run_train(v, TrainOptions{});
  // k1 per m3 = 4e-2 1/s = 4e-5 m3/(kg s) x 1000 kg/m3: the same bed, the
  // same extent, over 2e-3 m3.
  CHECK(*out_v.extract(0, rv) == Approx(mean_rate_parallel(0, 420, 2) * 1000).epsilon(1e-7));
}

TEST_CASE("rates of dependent reactions, or of a stage that is not a reactor, are refused",
          "[fit]") {
  const UnitParser units;
  std::string text = kParallel;
  text.replace(text.find("feed:"), 0,
               "  - id: r3\n    equation: B => C\n    rate: {per: catalyst, A: 1.0e-5 m3/(kg*s), "
               "Ea: 70 kJ/mol}\n    dH: 0\n");
  const Case c = load_case_from_string(text, "dependent.yaml", units);
  CHECK_THAT(input_error([&] { (void)sweep::OutputSpec::parse("L1.rate.r1", c); }),
             Catch::Contains("not independent"));
  const Case p = load_case_from_string(kParallel, "parallel.yaml", units);
  CHECK_THAT(input_error([&] { (void)sweep::OutputSpec::parse("L1.rate.r9", p); }),
             Catch::Contains("no reaction \"r9\""));
}

TEST_CASE("a fit to a differential reactor's measured rates recovers the kinetics", "[fit]") {
  // Noise-free mean rates of the parallel bed at small conversion (W from
  // 0.05 to 0.2 kg: 2-12 % reacted) over 400-440 K; the fit of r1's k(420
  // K) and Ea from the rates of both reactions must land on the invented
  // truth.
  const UnitParser units;
  // Start 30 % and 10-20 kJ/mol off the truth.
  std::string text = kParallel;
  const auto edit = [&](const std::string& from, const std::string& to) {
    text.replace(text.find(from), from.size(), to);
  };
  edit("A: 4.0e-5 m3/(kg*s), Ea: 50 kJ/mol", "A: 5.2e-5 m3/(kg*s), Ea: 60 kJ/mol");
  edit("A: 1.0e-5 m3/(kg*s), Ea: 70 kJ/mol", "A: 0.7e-5 m3/(kg*s), Ea: 55 kJ/mol");
  const Case c = load_case_from_string(text, "parallel.yaml", units);
  const sweep::CasePathTable table{c};
  fit::LabData d;
  d.file = "rates.csv";
  d.input_paths = {table.find("feed.T", "t"), table.find("train.L1.catalyst", "t")};
  d.input_names = {"feed.T", "train.L1.catalyst"};
  d.outputs = sweep::OutputSpec::parse("L1.rate.r1,L1.rate.r2", c);
  int line = 2;
  for (double T : {400.0, 413.0, 427.0, 440.0})
    for (double W : {0.05, 0.1, 0.2}) {
      d.inputs.push_back({T, W});
      d.measured.push_back({mean_rate_parallel(0, T, W), mean_rate_parallel(1, T, W)});
      d.lines.push_back(line++);
    }
  fit::FitOptions o;
  o.free = {{table.find("reactions.r1.rate.A", "t"), {}, {}},
            {table.find("reactions.r1.rate.Ea", "t"), {}, {}},
            {table.find("reactions.r2.rate.A", "t"), {}, {}},
            {table.find("reactions.r2.rate.Ea", "t"), {}, {}}};
  o.jobs = 1;
  const fit::FitResult f = fit::run_fit(c, table, d, o);
  REQUIRE(f.converged);
  CHECK(f.parameters[0].estimate == Approx(4.0e-5).epsilon(1e-6));
  CHECK(f.parameters[1].estimate == Approx(50e3).epsilon(1e-6));
  CHECK(f.parameters[2].estimate == Approx(1.0e-5).epsilon(1e-6));
  CHECK(f.parameters[3].estimate == Approx(70e3).epsilon(1e-6));
}
