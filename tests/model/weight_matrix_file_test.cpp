// Weight matrix files (model/weight_matrix_file.hpp): values in amperes, units from
// the file or the caller, and every error at file:line:column with the matrix position.
#include <catch2/catch.hpp>
#include <filesystem>
#include <fstream>

#include "core/error.hpp"
#include "model/weight_matrix_file.hpp"

using namespace nvsyn;

namespace {

std::string write_file(const std::string& name, const std::string& text) {
  const std::string path = (std::filesystem::temp_directory_path() / ("nvsyn_weights_test_" + name)).string();
  std::ofstream(path) << text;
  return path;
}

}  // namespace

TEST_CASE("a weight matrix with its unit in a comment", "[model][weights]") {
  const std::string path = write_file("good.csv", "# demo\n# unit: nA\n\n 0.5, -1.0,+2\n1e-1,0,3\n");
  const WeightMatrix m = read_weight_matrix(path, std::nullopt);
  CHECK(m.rows == 2);
  CHECK(m.columns == 3);
  CHECK(m.unit == "nA");
  REQUIRE(m.values.size() == 6);
  CHECK(m.values[0] == Approx(0.5e-9));
  CHECK(m.values[1] == Approx(-1.0e-9));
  CHECK(m.values[2] == Approx(2e-9));
  CHECK(m.values[3] == Approx(0.1e-9));
  CHECK(m.values[5] == Approx(3e-9));
}

TEST_CASE("the caller's unit applies when the file has none", "[model][weights]") {
  const std::string path = write_file("no_unit.csv", "1, 2\n");
  CHECK(read_weight_matrix(path, std::string("pA")).values[1] == Approx(2e-12));
  REQUIRE_THROWS_WITH(read_weight_matrix(path, std::nullopt),
                      path + ":1:1: error: 'unit': no unit for the weights: add a line '# unit: nA' or give --unit nA");
}

TEST_CASE("weight matrix errors name line, column, row and matrix column", "[model][weights]") {
  const std::string bad_number = write_file("bad_number.csv", "# unit: nA\n1, 2, 3\n4, x5, 6\n");
  REQUIRE_THROWS_WITH(read_weight_matrix(bad_number, std::nullopt),
                      bad_number + ":3:4: error: row 2, column 2: 'x5' is not a number (write plain numbers; the "
                                   "unit goes in '# unit: nA')");
  const std::string ragged = write_file("ragged.csv", "# unit: nA\n1, 2, 3\n4, 5\n");
  REQUIRE_THROWS_WITH(read_weight_matrix(ragged, std::nullopt),
                      ragged + ":3:1: error: row 2 has 2 values, but the rows above have 3");
  const std::string empty_value = write_file("empty_value.csv", "# unit: nA\n1,,3\n");
  REQUIRE_THROWS_WITH(read_weight_matrix(empty_value, std::nullopt),
                      Catch::Contains(":2:3: error: row 1, column 2: empty value"));
  const std::string wrong_unit = write_file("wrong_unit.csv", "# unit: mV\n1\n");
  REQUIRE_THROWS_WITH(read_weight_matrix(wrong_unit, std::nullopt),
                      wrong_unit + ":1:9: error: 'unit': 'mV' is a unit of voltage; weights are currents, e.g. nA");
  const std::string conflict = write_file("conflict.csv", "# unit: nA\n1\n");
  REQUIRE_THROWS_WITH(read_weight_matrix(conflict, std::string("pA")),
                      Catch::Contains("the file gives the unit 'nA' but --unit says 'pA'"));
  const std::string nothing = write_file("nothing.csv", "# unit: nA\n\n");
  REQUIRE_THROWS_WITH(read_weight_matrix(nothing, std::nullopt), Catch::Contains("holds no weights"));
  REQUIRE_THROWS_WITH(read_weight_matrix("/nonexistent/weights.csv", std::nullopt),
                      Catch::Contains("/nonexistent/weights.csv: error: cannot read the weight matrix file"));
}
