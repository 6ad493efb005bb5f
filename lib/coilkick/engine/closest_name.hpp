#pragma once
// "Did you mean ...?" support for messages about unknown names.
#include <string>
#include <vector>

namespace coilkick::engine {

// The candidate with the smallest edit distance to `name`, if that distance is at most a third
// of the longer length (rounded up, at least 2); otherwise empty.
std::string closest_name(const std::string& name, const std::vector<std::string>& candidates);

// " (did you mean 'x'?)" or "" — ready to append to a message.
std::string did_you_mean(const std::string& name, const std::vector<std::string>& candidates);

}  // namespace coilkick::engine
