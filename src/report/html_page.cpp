#include "rxtrain/report/html_page.hpp"

#include <fmt/format.h>

#include <chrono>
#include <cmath>
#include <ctime>
#include <fstream>
#include <iterator>
#include <variant>

#include "rxtrain/base/caution.hpp"
#include "rxtrain/report/atomic_file.hpp"
#include "rxtrain/report/sha256.hpp"
#include "rxtrain/report/text_format.hpp"

namespace rxtrain {

std::string utc_date_today() {
  const std::time_t now = std::chrono::system_clock::to_time_t(std::chrono::system_clock::now());
  std::tm tm{};
  gmtime_r(&now, &tm);
  return fmt::format("{:04}-{:02}-{:02}", tm.tm_year + 1900, tm.tm_mon + 1, tm.tm_mday);
}

ReportProvenance provenance_of(const std::string& case_file, const std::string& version) {
  std::ifstream in(case_file, std::ios::binary);
  const std::string bytes((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
  if (!in && !in.eof())
    throw OutputError(fmt::format("cannot read {} again to hash it", case_file));
  return {case_file, sha256_hex(bytes), utc_date_today(), version};
}

void add_report_files(OutputSet& out, const std::filesystem::path& dir, const std::string& page,
                      const std::vector<Figure>& figures) {
  out.add(dir / "report.html", page);
  for (const auto& f : figures) out.add(dir / (f.name + ".svg"), f.chart.render());
}

namespace html {

using svg::xml_escape;

namespace {

// Print-friendly, own design: serif-free body, light rules, tabular figures.
constexpr const char* kStyle = R"(
body { font-family: "DejaVu Sans", Arial, sans-serif; color: #1a1a1a; max-width: 60em;
       margin: 1.5em auto; padding: 0 1em; line-height: 1.4; }
h1 { font-size: 1.5em; margin-bottom: 0.2em; }
h2 { font-size: 1.15em; border-bottom: 1px solid #999; padding-bottom: 0.15em; margin-top: 1.6em; }
table { border-collapse: collapse; font-variant-numeric: tabular-nums; margin: 0.5em 0; }
th, td { padding: 0.2em 0.6em; border-bottom: 1px solid #ddd; }
th { text-align: left; background: #f2f2f2; font-weight: 600; }
td.num { text-align: right; white-space: nowrap; }
table.stages { font-size: 0.88em; }
.kelvin { color: #555; }
.origin td { border: none; padding: 0.05em 0.6em 0.05em 0; }
.caution { border: 2px solid #D55E00; padding: 0.5em 0.8em; margin: 1em 0; background: #fff7f2; }
figure { margin: 1.2em 0; page-break-inside: avoid; }
figcaption { font-size: 0.9em; color: #444; }
code { font-family: "DejaVu Sans Mono", monospace; font-size: 0.92em; }
@media print { body { max-width: none; margin: 0; } h2 { page-break-after: avoid; } }
)";

}  // namespace

std::string cell(const std::string& text, bool numeric) {
  return fmt::format("<td{}>{}</td>", numeric ? " class=\"num\"" : "", xml_escape(text));
}

std::string temperature_cell(double T) {
  return fmt::format("<td class=\"num\">{}<br/><span class=\"kelvin\">{} K</span></td>",
                     celsius_text(T), fixed_text(T, 2));
}

std::string header_row(const std::vector<std::string>& heads) {
  std::string h = "<tr>";
  for (const auto& head : heads) h += fmt::format("<th>{}</th>", xml_escape(head));
  return h + "</tr>\n";
}

std::string page_begin(const std::string& heading, const ReportProvenance& p) {
  std::string h;
  h += "<!DOCTYPE html>\n<html xmlns=\"http://www.w3.org/1999/xhtml\" lang=\"en\">\n<head>\n"
       "<meta charset=\"utf-8\"/>\n";
  h += fmt::format("<title>{}</title>\n<style>{}</style>\n</head>\n<body>\n", xml_escape(heading),
                   kStyle);
  h += fmt::format("<h1>{}</h1>\n", xml_escape(heading));
  h += "<table class=\"origin\">\n";
  h +=
      fmt::format("<tr><td>case file</td><td><code>{}</code></td></tr>\n", xml_escape(p.case_file));
  h +=
      fmt::format("<tr><td>SHA-256</td><td><code>{}</code></td></tr>\n", xml_escape(p.case_sha256));
  h += fmt::format("<tr><td>rxtrain</td><td>{}</td></tr>\n", xml_escape(p.version));
  h += fmt::format("<tr><td>date</td><td>{}</td></tr>\n</table>\n", xml_escape(p.date));
  h += fmt::format("<p class=\"caution\"><strong>Caution.</strong> {}</p>\n", xml_escape(kCaution));
  return h;
}

std::string page_end() { return "</body>\n</html>\n"; }

std::string figures_section(const std::vector<Figure>& figures) {
  std::string h = "<h2 id=\"figures\">Figures</h2>\n";
  for (const auto& f : figures)
    h += fmt::format("<figure id=\"{}\">\n{}\n<figcaption>{}</figcaption>\n</figure>\n",
                     xml_escape(f.name), f.chart.render_inline(), xml_escape(f.caption));
  return h;
}

std::string warnings_section(const std::vector<std::string>& warnings) {
  std::string h = "<h2 id=\"warnings\">Warnings</h2>\n";
  if (warnings.empty()) return h + "<p>None.</p>\n";
  h += "<ul>\n";
  for (const auto& w : warnings) h += fmt::format("<li>{}</li>\n", xml_escape(w));
  return h + "</ul>\n";
}

namespace {

std::string cp_text(const ThermoModel& t) {
  struct Visitor {
    std::string operator()(const CpConstant& m) const {
      return fmt::format("{:g} J/(mol·K)", m.cp);
    }
    std::string operator()(const CpPolynomial& m) const {
      return fmt::format("{:g} + {:g}·T + {:g}·T² + {:g}·T³ J/(mol·K)", m.a[0], m.a[1], m.a[2],
                         m.a[3]);
    }
    std::string operator()(const CpShomate& m) const {
      return fmt::format("Shomate, {} range(s)", m.sets.size());
    }
    std::string operator()(const Nasa7&) const { return "NASA-7 polynomials"; }
  };
  return std::visit(Visitor{}, t.model());
}

// The rate law written out with the case's own numbers (SI).
std::string rate_text(const Mechanism& mech, const Reaction& rx) {
  const bool pressure = rx.rate.driving == Driving::Pressure;
  std::string s =
      fmt::format("r = {:.4g} · exp[−{:.4g} kJ/mol / R · ", rx.rate.A, rx.rate.Ea / 1e3);
  s += rx.rate.T_ref ? fmt::format("(1/T − 1/{:.2f} K)]", *rx.rate.T_ref) : std::string("1/T]");
  for (int i = 0; i < mech.n_species(); ++i) {
    const double o = rx.rate.orders[i];
    if (o == 0) continue;
    s += fmt::format(" · {}({})", pressure ? "p" : "C", mech.species()[i].id);
    if (o != 1) s += fmt::format("^{:g}", o);
  }
  if (rx.reversible) s += " · (1 − Q/K)";
  if (const auto& a = rx.rate.adsorption) {
    // The LHHW denominator, each K_j(T) by its value at its reference T.
    s += " / (1";
    for (const auto& t : a->terms) {
      s += fmt::format(" + {:.4g}", t.K);
      if (t.dH != 0) {
        // exp(−dH/R ...) with the sign of −dH folded in (dH < 0 usually).
        const std::string e =
            fmt::format("{}{:.4g} kJ/mol", t.dH > 0 ? "−" : "", std::abs(t.dH) / 1e3);
        s += t.T_ref ? fmt::format("·exp[{} / R · (1/T − 1/{:.2f} K)]", e, *t.T_ref)
                     : fmt::format("·exp[{} / (R T)]", e);
      }
      for (int i = 0; i < mech.n_species(); ++i) {
        if (t.powers[i] == 0) continue;
        s += fmt::format("·{}({})", pressure ? "p" : "C", mech.species()[i].id);
        if (t.powers[i] != 1) s += fmt::format("^{:g}", t.powers[i]);
      }
    }
    s += ")";
    if (a->exponent != 1) s += fmt::format("^{:g}", a->exponent);
  }
  s += rx.rate.basis == RateBasis::Catalyst ? "   [mol/(kg·s)" : "   [mol/(m³·s)";
  s += pressure ? ", p in Pa]" : ", C in mol/m³]";
  return s;
}

}  // namespace

std::string inputs_section(const Case& c) {
  const Mechanism& m = c.mechanism;
  std::string h =
      "<h2 id=\"inputs\">Inputs</h2>\n<h3>Species</h3>\n<table>\n<tr><th>id</th>"
      "<th>name</th><th>M (g/mol)</th><th>h_f (kJ/mol)</th><th>c_p</th></tr>\n";
  for (const auto& s : m.species())
    h += "<tr>" + cell(s.id, false) + cell(s.name, false) +
         cell(s.mw ? fmt::format("{:.3f}", *s.mw * 1e3) : "-", true) +
         cell(s.thermo.h_f() ? fmt::format("{:.3f}", *s.thermo.h_f() / 1e3) : "-", true) +
         cell(cp_text(s.thermo), false) + "</tr>\n";
  h += "</table>\n<h3>Reactions</h3>\n<table>\n<tr><th>id</th><th>equation</th>"
       "<th>ΔH_r(298.15 K) (kJ/mol)</th><th>rate law (SI)</th><th>as the case gives it</th>"
       "</tr>\n";
  for (const auto& rx : m.reactions())
    h += "<tr>" + cell(rx.id, false) + cell(rx.equation, false) +
         cell(fmt::format("{:.3f}", rx.dH_298 / 1e3), true) + "<td><code>" +
         xml_escape(rate_text(m, rx)) + "</code></td><td><code>" +
         xml_escape(rx.rate.as_written.empty() ? "-" : rx.rate.as_written) + "</code></td></tr>\n";
  return h + "</table>\n";
}

std::string feed_section(const Case& c) {
  const auto& species = c.mechanism.species();
  const auto y = fraction_column(mole_fractions(c.feed));
  std::string h = fmt::format(
      "<h2 id=\"feed\">Feed and design basis</h2>\n<p>Feed: {} °C ({} K), {} bar, {} mol/s in "
      "all; key species {}.</p>\n<table>\n<tr><th>species</th><th>flow (mol/s)</th>"
      "<th>mole fraction</th></tr>\n",
      celsius_text(c.feed.T), fixed_text(c.feed.T, 2), bar_text(c.feed.P),
      plain_sig_text(c.feed.total_flow()), xml_escape(species[c.key].id));
  for (std::size_t i = 0; i < species.size(); ++i)
    h += "<tr>" + cell(species[i].id, false) + cell(plain_sig_text(c.feed.F[i]), true) +
         cell(y[i], true) + "</tr>\n";
  h += "</table>\n";
  auto limit = [](const std::optional<double>& T) {
    return T ? fmt::format("{} °C ({} K)", celsius_text(*T), fixed_text(*T, 2))
             : std::string("not given");
  };
  h += fmt::format(
      "<p>Train-level target: {}. Catalyst limits: T_max {}; T_in_min {}.</p>\n",
      c.target_conversion ? fmt::format("conversion of {} = {}", xml_escape(species[c.key].id),
                                        fixed_text(*c.target_conversion, 4))
      : c.target_outlet
          ? fmt::format("outlet {} of {}", xml_escape(species[c.target_outlet->species].id),
                        purity_text(c.target_outlet->x))
          : std::string("none (each stage as the case gives it)"),
      limit(c.limits.T_max), limit(c.limits.T_in_min));
  // What each sized stage is sized to, and the products the case wants.
  std::string targets;
  for (const auto& s : c.train) {
    const auto* r = std::get_if<ReactorSpec>(&s);
    if (!r || !r->sized()) continue;
    targets += targets.empty() ? "" : "; ";
    targets +=
        r->target_outlet
            ? fmt::format("{} to an outlet {} of {}", r->id, species[r->target_outlet->species].id,
                          purity_text(r->target_outlet->x))
            : fmt::format("{} to a conversion of {} of {}", r->id, species[c.key].id,
                          fixed_text(*r->target_conversion, 4));
  }
  if (!targets.empty()) h += "<p>Stages sized: " + xml_escape(targets) + ".</p>\n";
  if (!c.products.empty()) {
    std::string names;
    for (const int p : c.products) names += (names.empty() ? "" : ", ") + species[p].id;
    h += "<p>Wanted products: " + xml_escape(names) + ".</p>\n";
  }
  return h;
}

}  // namespace html
}  // namespace rxtrain
