#pragma once
// Weight matrix files: a plain-text matrix of weights (currents) for
// `nvsyn map-weights`.
//
//   # Any line starting with '#' is a comment.
//   # unit: nA
//   0.05, -0.12, 0.00
//   0.10,  0.03, 0.07
//
// * One matrix row per line, values separated by commas; spaces around values are
//   ignored; blank lines are skipped. Every row has the same number of columns.
// * The unit is a current unit (A with a prefix: pA, nA, uA, ...), given by one
//   comment line `# unit: <unit>` or by the caller (the --unit option). When both
//   are given they must agree. Values are converted to amperes.
// * Weights may be negative (the sign is kept outside the devices).
// Every error is a UserError at file:line:column, naming the matrix row and column.
#include <cstddef>
#include <optional>
#include <string>
#include <vector>

namespace nvsyn {

struct WeightMatrix {
  std::string file;
  std::string unit;  // as written, e.g. "nA"
  std::size_t rows = 0, columns = 0;
  std::vector<double> values;  // A, row-major
};

WeightMatrix read_weight_matrix(const std::string& path, const std::optional<std::string>& unit_given);

}  // namespace nvsyn
