#include "svg_plot.hpp"

#include <algorithm>
#include <cmath>
#include <sstream>

#include "report_format.hpp"

namespace coilkick::cli {
namespace {

// A palette of our own: distinguishable hues at similar lightness.
const char* const kColours[] = {"#1b6f8a", "#c2571a", "#4d8c2a", "#8a3f8f", "#b8901a", "#2f4fa8", "#a8324a", "#5c6b73"};

double nice_step(double span, int target) {
  const double raw = span / target;
  const double p = std::pow(10.0, std::floor(std::log10(raw)));
  for (double m : {1.0, 2.0, 5.0, 10.0}) {
    if (m * p >= raw) return m * p;
  }
  return 10 * p;
}

std::string xml_text(const std::string& s) {
  std::string out;
  for (char ch : s) {
    if (ch == '&') out += "&amp;";
    else if (ch == '<') out += "&lt;";
    else if (ch == '>') out += "&gt;";
    else out += ch;
  }
  return out;
}

struct Panel {
  double x0, y0, w, h;  // pixels
  double t1, vmin, vmax;
  double t0 = 0.0;      // time at the left edge
  double px(double t) const { return x0 + w * (t - t0) / (t1 - t0); }
  double py(double v) const { return y0 + h * (1.0 - (v - vmin) / (vmax - vmin)); }
};

void axes(std::ostringstream& o, const Panel& p, const std::string& ylabel, bool xlabel,
          const std::string& xtext = "time after the start of switch-off (ms)") {
  o << "<rect x='" << p.x0 << "' y='" << p.y0 << "' width='" << p.w << "' height='" << p.h
    << "' fill='#fbfaf7' stroke='#555'/>\n";
  const double ty = nice_step(p.vmax - p.vmin, 5);
  for (double v = std::ceil(p.vmin / ty) * ty; v <= p.vmax + 1e-12; v += ty) {
    if (std::abs(v) < 1e-9 * ty) v = 0.0;  // no "-0" label
    o << "<line x1='" << p.x0 << "' x2='" << p.x0 + p.w << "' y1='" << p.py(v) << "' y2='" << p.py(v)
      << "' stroke='#e2dfd8'/><text x='" << p.x0 - 6 << "' y='" << p.py(v) + 4 << "' text-anchor='end' font-size='11'>"
      << v << "</text>\n";
  }
  const double tx = nice_step((p.t1 - p.t0) * 1e3, 8);
  for (double t = std::ceil(p.t0 * 1e3 / tx) * tx; t <= p.t1 * 1e3 + 1e-12; t += tx) {
    if (std::abs(t) < 1e-9 * tx) t = 0.0;
    o << "<line x1='" << p.px(t * 1e-3) << "' x2='" << p.px(t * 1e-3) << "' y1='" << p.y0 << "' y2='" << p.y0 + p.h
      << "' stroke='#e2dfd8'/>";
    if (xlabel) o << "<text x='" << p.px(t * 1e-3) << "' y='" << p.y0 + p.h + 16 << "' text-anchor='middle' font-size='11'>" << t << "</text>";
    o << "\n";
  }
  o << "<text transform='translate(" << p.x0 - 48 << "," << p.y0 + p.h / 2 << ") rotate(-90)' text-anchor='middle' font-size='13'>"
    << ylabel << "</text>\n";
  if (xlabel) {
    o << "<text x='" << p.x0 + p.w / 2 << "' y='" << p.y0 + p.h + 36 << "' text-anchor='middle' font-size='13'>"
      << xtext << "</text>\n";
  }
}

}  // namespace

std::string comparison_svg(const std::vector<drivers::ComparisonRow>& rows, const std::string& title) {
  double t_end = 0.0, vmax = 0.0, imax = 0.0, rating = std::nan("");
  double derate = 0.8;
  for (const auto& r : rows) {
    if (!r.result) continue;
    const auto& m = r.result->metrics;
    double t = m.get("current_decay_time_10pct_s");
    if (std::isfinite(t)) t_end = std::max(t_end, 1.3 * t);
    vmax = std::max(vmax, m.get("switch_voltage_peak_V"));
    imax = std::max(imax, m.get("coil_current_at_switch_off_A"));
    rating = m.get("switch_voltage_rating_V");
    derate = r.result->spec.analysis.switch_voltage_derating;
  }
  if (!(t_end > 0.0)) t_end = 1e-3;
  if (std::isfinite(rating)) vmax = std::max(vmax, rating);
  const Panel top{80, 50, 640, 260, t_end, 0.0, vmax * 1.08};
  const Panel bottom{80, 350, 640, 200, t_end, std::min(0.0, -0.05 * imax), imax * 1.08};
  std::ostringstream o;
  o << "<svg xmlns='http://www.w3.org/2000/svg' width='940' height='640' font-family='sans-serif'>\n"
    << "<rect width='940' height='640' fill='white'/>\n"
    << "<text x='80' y='30' font-size='16' font-weight='bold'>" << xml_text(title) << "</text>\n";
  axes(o, top, "switch voltage (V)", false);
  axes(o, bottom, "coil current (A)", true);
  if (std::isfinite(rating)) {
    for (const auto& [v, label] : {std::make_pair(rating, std::string("rating")), std::make_pair(derate * rating, std::string("derated limit"))}) {
      o << "<line x1='" << top.x0 << "' x2='" << top.x0 + top.w << "' y1='" << top.py(v) << "' y2='" << top.py(v)
        << "' stroke='#a8324a' stroke-dasharray='6 4'/><text x='" << top.x0 + top.w - 4 << "' y='" << top.py(v) - 4
        << "' text-anchor='end' font-size='11' fill='#a8324a'>" << label << " " << v << " V</text>\n";
    }
  }
  int k = 0;
  for (const auto& r : rows) {
    if (!r.result) continue;
    const char* colour = kColours[k % 8];
    const auto& w = r.result->waveforms;
    const double t0 = r.result->spec.drive.switch_off_at_s;
    std::ostringstream pv, pi;
    for (Eigen::Index i = 0; i < w.time_s.size(); ++i) {
      const double t = w.time_s[i] - t0;
      if (t < 0 || t > t_end) continue;
      pv << top.px(t) << "," << top.py(std::min(w.switch_voltage_V[i], top.vmax)) << " ";
      pi << bottom.px(t) << "," << bottom.py(std::max(bottom.vmin, w.coil_current_A[i])) << " ";
    }
    o << "<polyline fill='none' stroke='" << colour << "' stroke-width='1.6' points='" << pv.str() << "'/>\n";
    o << "<polyline fill='none' stroke='" << colour << "' stroke-width='1.6' points='" << pi.str() << "'/>\n";
    o << "<rect x='740' y='" << 60 + 22 * k << "' width='14' height='4' fill='" << colour << "'/><text x='760' y='" << 66 + 22 * k
      << "' font-size='12'>" << drivers::to_string(r.kind) << "</text>\n";
    ++k;
  }
  o << "<text x='20' y='628' font-size='11' fill='#555'>" << kCautionLine << "</text>\n";
  o << "</svg>\n";
  return o.str();
}

std::string overlay_svg(const std::vector<double>& time_s, const std::vector<double>& measured_A, const std::vector<double>& model_A,
                        double noise_A, const std::string& title, const std::string& edge_words) {
  const std::size_t n = std::min({time_s.size(), measured_A.size(), model_A.size()});
  if (n < 2) return {};
  double imin = 0.0, imax = 0.0, rmax = 3.0;
  for (std::size_t k = 0; k < n; ++k) {
    imin = std::min({imin, measured_A[k], model_A[k]});
    imax = std::max({imax, measured_A[k], model_A[k]});
    rmax = std::max(rmax, std::abs(measured_A[k] - model_A[k]) / noise_A);
  }
  const double pad = 0.05 * (imax - imin > 0.0 ? imax - imin : 1.0);
  Panel top{80, 50, 640, 300, time_s[n - 1], imin - pad, imax + pad};
  top.t0 = time_s[0];
  Panel bottom{80, 400, 640, 150, time_s[n - 1], -1.1 * rmax, 1.1 * rmax};
  bottom.t0 = time_s[0];
  std::ostringstream o;
  o << "<svg xmlns='http://www.w3.org/2000/svg' width='940' height='640' font-family='sans-serif'>\n"
    << "<rect width='940' height='640' fill='white'/>\n"
    << "<text x='80' y='30' font-size='16' font-weight='bold'>" << xml_text(title) << "</text>\n";
  axes(o, top, "coil current (A)", false);
  axes(o, bottom, "residual (noise units)", true, "time after the " + edge_words + " (ms)");
  // At most ~2000 points a line: every k-th sample.
  const std::size_t stride = std::max<std::size_t>(1, n / 2000);
  std::ostringstream pm, pf, pr;
  for (std::size_t k = 0; k < n; k += stride) {
    pm << top.px(time_s[k]) << "," << top.py(measured_A[k]) << " ";
    pf << top.px(time_s[k]) << "," << top.py(model_A[k]) << " ";
    pr << bottom.px(time_s[k]) << "," << bottom.py((measured_A[k] - model_A[k]) / noise_A) << " ";
  }
  o << "<polyline fill='none' stroke='" << kColours[5] << "' stroke-width='1' opacity='0.7' points='" << pm.str() << "'/>\n";
  o << "<polyline fill='none' stroke='" << kColours[1] << "' stroke-width='2' points='" << pf.str() << "'/>\n";
  o << "<polyline fill='none' stroke='" << kColours[7] << "' stroke-width='1' points='" << pr.str() << "'/>\n";
  for (double band : {-3.0, 3.0}) {
    o << "<line x1='" << bottom.x0 << "' x2='" << bottom.x0 + bottom.w << "' y1='" << bottom.py(band) << "' y2='" << bottom.py(band)
      << "' stroke='#a8324a' stroke-dasharray='6 4'/>\n";
  }
  o << "<rect x='740' y='60' width='14' height='4' fill='" << kColours[5] << "'/><text x='760' y='66' font-size='12'>measured</text>\n"
    << "<rect x='740' y='82' width='14' height='4' fill='" << kColours[1] << "'/><text x='760' y='88' font-size='12'>fitted model</text>\n"
    << "<rect x='740' y='410' width='14' height='4' fill='" << kColours[7]
    << "'/><text x='760' y='416' font-size='12'>measured - model</text>\n"
    << "<line x1='740' x2='754' y1='434' y2='434' stroke='#a8324a' stroke-dasharray='6 4'/><text x='760' y='438' font-size='12'>"
    << "3 sigma of the noise</text>\n";
  o << "<text x='20' y='628' font-size='11' fill='#555'>" << kCautionLine << "</text>\n";
  o << "</svg>\n";
  return o.str();
}

}  // namespace coilkick::cli
