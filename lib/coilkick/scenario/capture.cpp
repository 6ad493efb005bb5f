#include "coilkick/scenario/capture.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdlib>
#include <fstream>
#include <sstream>
#include <stdexcept>

#include "coilkick/scenario/quantity.hpp"

namespace coilkick::scenario {
namespace {

std::string trim(const std::string& s) {
  std::size_t a = 0, b = s.size();
  while (a < b && std::isspace(static_cast<unsigned char>(s[a]))) ++a;
  while (b > a && std::isspace(static_cast<unsigned char>(s[b - 1]))) --b;
  return s.substr(a, b - a);
}

std::string lower(std::string s) {
  for (auto& c : s) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return s;
}

std::vector<std::string> split(const std::string& line, char sep) {
  std::vector<std::string> out;
  std::string field;
  std::istringstream in(line);
  while (std::getline(in, field, sep)) out.push_back(trim(field));
  if (!line.empty() && line.back() == sep) out.emplace_back();
  return out;
}

// A number as instruments write it ("1.5e-3", with a decimal comma "1,5E-3"); false if the field
// is not one number from start to end.
bool number_of(std::string f, bool decimal_comma, double& out) {
  f = trim(f);
  if (f.size() >= 2 && f.front() == '"' && f.back() == '"') f = trim(f.substr(1, f.size() - 2));
  if (f.empty()) return false;
  if (decimal_comma) std::replace(f.begin(), f.end(), ',', '.');
  char* end = nullptr;
  out = std::strtod(f.c_str(), &end);
  return end == f.c_str() + f.size();
}

struct Column {
  std::string name;  // as in the header, without its unit
  std::string unit;  // from "(unit)" or "[unit]" in the header; empty if none
};

Column column_of(const std::string& header_field) {
  std::string f = trim(header_field);
  if (f.size() >= 2 && f.front() == '"' && f.back() == '"') f = trim(f.substr(1, f.size() - 2));
  for (const auto& [open, close] : {std::pair<char, char>{'(', ')'}, {'[', ']'}}) {
    const auto a = f.rfind(open);
    if (a != std::string::npos && !f.empty() && f.back() == close) return {trim(f.substr(0, a)), trim(f.substr(a + 1, f.size() - a - 2))};
  }
  return {f, ""};
}

class Reader {
 public:
  Reader(std::string file, const CaptureOptions& o) : file_(std::move(file)), o_(o) {}

  Capture read(const std::string& text) {
    for (const auto& [role, col] : o_.channels) {
      if (role != "time" && role != "current" && role != "voltage" && role != "contact" && role != "drive") {
        throw std::invalid_argument(file_ + ": channel role '" + role + "' is not one of time, current, voltage, contact, drive");
      }
    }
    split_lines(text);
    find_data();
    Capture c;
    c.file = file_;
    c.first_data_line = rows_.front().line;
    c.time_s = channel("time", Dimension::time);
    if (o_.channels.count("current")) c.current_A = channel("current", Dimension::current);
    if (o_.channels.count("voltage")) c.voltage_V = channel("voltage", Dimension::voltage);
    if (o_.channels.count("contact")) c.contact = channel("contact", Dimension::dimensionless);
    if (o_.channels.count("drive")) c.drive_V = channel("drive", Dimension::voltage);
    check_time(c.time_s);
    if (o_.time_zero == CaptureTimeZero::switch_voltage_edge) shift_to_edge(c, c.voltage_V, "switch voltage");
    if (o_.time_zero == CaptureTimeZero::drive_edge) shift_to_edge(c, c.drive_V, "drive");
    return c;
  }

 private:
  std::string file_;
  const CaptureOptions& o_;
  std::vector<std::pair<int, std::string>> lines_;  // (1-based line, text) of the non-blank lines
  char sep_ = ',';
  bool decimal_comma_ = false;
  std::vector<Column> columns_;
  struct Row {
    int line;
    std::vector<std::string> fields;
  };
  std::vector<Row> rows_;

  [[noreturn]] void fail(int line, const std::string& what) const {
    throw std::invalid_argument(file_ + ":" + std::to_string(line) + ": " + what);
  }

  void split_lines(const std::string& text) {
    std::istringstream in(text);
    std::string line;
    int n = 0;
    while (std::getline(in, line)) {
      ++n;
      if (!line.empty() && line.back() == '\r') line.pop_back();
      if (!trim(line).empty()) lines_.emplace_back(n, line);
    }
    if (lines_.empty()) throw std::invalid_argument(file_ + ": the capture is empty");
    // Separator: from the last line, which is data (a header's prose may hold any of them): a
    // semicolon or a tab there decides; else commas.
    const std::string& last = lines_.back().second;
    if (last.find(';') != std::string::npos) sep_ = ';';
    else if (last.find('\t') != std::string::npos) sep_ = '\t';
    decimal_comma_ = sep_ != ',';
  }

  bool is_data(const std::string& line) const {
    const auto f = split(line, sep_);
    if (f.size() < 2) return false;
    double v = 0.0;
    return number_of(f[0], decimal_comma_, v) && number_of(f[1], decimal_comma_, v);
  }

  // Header lines are those before the first data line (two leading numbers); the last of them
  // with as many fields as the data names the columns.
  void find_data() {
    std::size_t first = lines_.size();
    for (std::size_t k = 0; k < lines_.size(); ++k) {
      if (is_data(lines_[k].second)) {
        first = k;
        break;
      }
    }
    if (first == lines_.size()) throw std::invalid_argument(file_ + ": no data rows (lines starting with two numbers)");
    const auto width = split(lines_[first].second, sep_).size();
    for (std::size_t k = first; k-- > 0;) {
      const auto f = split(lines_[k].second, sep_);
      if (f.size() == width && lines_[k].second.rfind('#', 0) != 0) {
        for (const auto& field : f) columns_.push_back(column_of(field));
        break;
      }
    }
    if (columns_.empty()) {
      for (std::size_t j = 0; j < width; ++j) columns_.push_back({std::to_string(j + 1), ""});
    }
    for (std::size_t k = first; k < lines_.size(); ++k) {
      const auto& [n, l] = lines_[k];
      if (l.rfind('#', 0) == 0) continue;  // a comment among the data
      rows_.push_back({n, split(l, sep_)});
    }
  }

  std::string column_list() const {
    std::string s;
    for (std::size_t j = 0; j < columns_.size(); ++j) s += (j ? ", " : "") + std::to_string(j + 1) + " '" + columns_[j].name + "'";
    return s;
  }

  std::size_t column_index(const std::string& role) const {
    const auto it = o_.channels.find(role);
    if (it == o_.channels.end()) return 0;  // time: the first column
    const std::string& want = it->second;
    char* end = nullptr;
    const long k = std::strtol(want.c_str(), &end, 10);
    if (!want.empty() && end == want.c_str() + want.size()) {
      if (k < 1 || static_cast<std::size_t>(k) > columns_.size()) {
        throw std::invalid_argument(file_ + ": channel " + role + "=" + want + ": there are columns " + column_list());
      }
      return static_cast<std::size_t>(k - 1);
    }
    for (std::size_t j = 0; j < columns_.size(); ++j) {
      if (lower(columns_[j].name) == lower(want)) return j;
    }
    throw std::invalid_argument(file_ + ": channel " + role + "=" + want + ": no such column; there are columns " + column_list());
  }

  // Factor from the column's unit to the role's SI unit.
  double factor(const std::string& role, std::size_t j, Dimension dim) const {
    std::string unit = columns_[j].unit;
    for (const auto& key : {columns_[j].name, o_.channels.count(role) ? o_.channels.at(role) : std::string()}) {
      const auto it = o_.units.find(key);
      if (!key.empty() && it != o_.units.end()) unit = it->second;
    }
    const bool shunt = role == "current" && !std::isnan(o_.shunt_resistance_ohm);
    if (dim == Dimension::dimensionless) return 1.0;
    const Dimension expect = shunt ? Dimension::voltage : dim;
    if (shunt && !(o_.shunt_resistance_ohm > 0.0)) throw std::invalid_argument(file_ + ": the shunt resistance must be > 0");
    double f = 1.0;
    if (!unit.empty()) {
      try {
        f = parse_quantity("1 " + unit, expect);
      } catch (const std::invalid_argument& e) {
        std::string why = e.what();
        if (role == "current" && !shunt && parse_quantity_or_nan("1 " + unit, Dimension::voltage) > 0.0) {
          why = "is in " + unit + ": a current measured as a shunt's voltage needs the shunt resistance";
        }
        throw std::invalid_argument(file_ + ": channel " + role + " (column '" + columns_[j].name + "', unit '" + unit + "') " + why);
      }
    }
    return shunt ? f / o_.shunt_resistance_ohm : f;
  }

  static double parse_quantity_or_nan(const std::string& text, Dimension d) {
    try {
      return parse_quantity(text, d);
    } catch (const std::invalid_argument&) {
      return std::nan("");
    }
  }

  std::vector<double> channel(const std::string& role, Dimension dim) {
    const std::size_t j = column_index(role);
    const double f = factor(role, j, dim);
    std::vector<double> v;
    v.reserve(rows_.size());
    for (const auto& r : rows_) {
      if (j >= r.fields.size()) fail(r.line, "column " + std::to_string(j + 1) + " ('" + columns_[j].name + "', the " + role + ") is missing");
      double x = 0.0;
      const std::string& text = r.fields[j];
      if (trim(text).empty()) fail(r.line, "the " + role + " ('" + columns_[j].name + "') is empty");
      if (!number_of(text, decimal_comma_, x)) fail(r.line, "the " + role + " ('" + columns_[j].name + "') '" + text + "' is not a number");
      if (!std::isfinite(x)) fail(r.line, "the " + role + " ('" + columns_[j].name + "') '" + text + "' is not a finite number");
      v.push_back(x * f);
    }
    return v;
  }

  void check_time(const std::vector<double>& t) const {
    if (t.size() < o_.minimum_samples) {
      throw std::invalid_argument(file_ + ": " + std::to_string(t.size()) + " samples; at least " + std::to_string(o_.minimum_samples) +
                                  " are needed");
    }
    for (std::size_t k = 1; k < t.size(); ++k) {
      if (!(t[k] > t[k - 1])) {
        std::ostringstream m;
        m << "time " << t[k] << " s does not increase (the line before has " << t[k - 1] << " s)";
        fail(rows_[k].line, m.str());
      }
    }
  }

  // Time zero at the edge of the switch voltage or the drive (edge_time_s).
  void shift_to_edge(Capture& c, const std::vector<double>& signal, const std::string& what) const {
    if (signal.empty()) throw std::invalid_argument(file_ + ": time zero at the " + what + " edge needs a " + what + " channel");
    const double t = edge_time_s(c.time_s, signal);
    if (std::isnan(t)) {
      throw std::invalid_argument(file_ + ": the " + what + " never moves from its first value: no edge to take as time zero");
    }
    c.time_shift_s = t;
    for (auto& x : c.time_s) x -= t;
  }
};

}  // namespace

EdgeLevel edge_level(const std::vector<double>& signal) {
  EdgeLevel e;
  if (signal.empty()) return e;
  const double v0 = signal.front();
  double far = v0;
  for (double v : signal) far = std::abs(v - v0) > std::abs(far - v0) ? v : far;
  if (!(std::abs(far - v0) > 1e-9 * std::max(1.0, std::abs(v0)))) return e;
  e.level = v0 + 0.5 * (far - v0);
  e.direction = far > v0 ? 1 : -1;
  return e;
}

double edge_time_s(const std::vector<double>& time_s, const std::vector<double>& signal) {
  const EdgeLevel e = edge_level(signal);
  if (e.direction == 0) return std::nan("");
  for (std::size_t k = 1; k < signal.size(); ++k) {
    if (e.direction * (signal[k] - e.level) >= 0.0) {
      const double a = signal[k - 1], b = signal[k];
      return time_s[k - 1] + (e.level - a) / (b - a) * (time_s[k] - time_s[k - 1]);
    }
  }
  return std::nan("");
}

Capture read_capture_text(const std::string& text, const std::string& file, const CaptureOptions& options) {
  return Reader(file, options).read(text);
}

Capture read_capture_file(const std::string& path, const CaptureOptions& options) {
  std::ifstream in(path, std::ios::binary);
  if (!in) throw std::invalid_argument(path + ": cannot read the capture file");
  std::ostringstream s;
  s << in.rdbuf();
  return read_capture_text(s.str(), path, options);
}

}  // namespace coilkick::scenario
