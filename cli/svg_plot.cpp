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

struct Panel {
  double x0, y0, w, h;  // pixels
  double t1, vmin, vmax;
  double px(double t) const { return x0 + w * t / t1; }
  double py(double v) const { return y0 + h * (1.0 - (v - vmin) / (vmax - vmin)); }
};

void axes(std::ostringstream& o, const Panel& p, const std::string& ylabel, bool xlabel) {
  o << "<rect x='" << p.x0 << "' y='" << p.y0 << "' width='" << p.w << "' height='" << p.h
    << "' fill='#fbfaf7' stroke='#555'/>\n";
  const double ty = nice_step(p.vmax - p.vmin, 5);
  for (double v = std::ceil(p.vmin / ty) * ty; v <= p.vmax + 1e-12; v += ty) {
    if (std::abs(v) < 1e-9 * ty) v = 0.0;  // no "-0" label
    o << "<line x1='" << p.x0 << "' x2='" << p.x0 + p.w << "' y1='" << p.py(v) << "' y2='" << p.py(v)
      << "' stroke='#e2dfd8'/><text x='" << p.x0 - 6 << "' y='" << p.py(v) + 4 << "' text-anchor='end' font-size='11'>"
      << v << "</text>\n";
  }
  const double tx = nice_step(p.t1 * 1e3, 8);
  for (double t = 0; t <= p.t1 * 1e3 + 1e-12; t += tx) {
    o << "<line x1='" << p.px(t * 1e-3) << "' x2='" << p.px(t * 1e-3) << "' y1='" << p.y0 << "' y2='" << p.y0 + p.h
      << "' stroke='#e2dfd8'/>";
    if (xlabel) o << "<text x='" << p.px(t * 1e-3) << "' y='" << p.y0 + p.h + 16 << "' text-anchor='middle' font-size='11'>" << t << "</text>";
    o << "\n";
  }
  o << "<text transform='translate(" << p.x0 - 48 << "," << p.y0 + p.h / 2 << ") rotate(-90)' text-anchor='middle' font-size='13'>"
    << ylabel << "</text>\n";
  if (xlabel) {
    o << "<text x='" << p.x0 + p.w / 2 << "' y='" << p.y0 + p.h + 36 << "' text-anchor='middle' font-size='13'>"
      << "time after the start of switch-off (ms)</text>\n";
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
    << "<text x='80' y='30' font-size='16' font-weight='bold'>" << title << "</text>\n";
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

}  // namespace coilkick::cli
