// Reading and validating measured pulse data (CSV): units, polarity spellings, and the
// exact text of the errors (file:line:column and column name).
#include <catch2/catch.hpp>

#include "devices/pulse_data_csv.hpp"

using namespace nvsyn;

TEST_CASE("CSV pulse data: columns in any order, units in brackets, comments skipped", "[calibration]") {
  const PulseData d = parse_pulse_csv(
      "# measured on the probe station\n"
      "polarity,device,cycle,pulse,conductance [nS],read_time [ms]\n"
      "potentiate,3,0,0,150,20\n"
      "+,3,0,1,250.5,20\n"
      "\n"
      "-,3,0,0,900,20\n"
      "depress,3,0,0,880,2000\n",
      "m.csv");
  REQUIRE(d.records.size() == 4);
  CHECK(d.has_read_time);
  CHECK(d.records[0].device == 3);
  CHECK(d.records[0].polarity == Polarity::potentiate);
  CHECK(d.records[1].polarity == Polarity::potentiate);
  CHECK(d.records[1].conductance == Approx(250.5e-9));
  CHECK(d.records[1].row == 4);
  CHECK(d.records[2].polarity == Polarity::depress);
  CHECK(d.records[3].read_time == Approx(2.0));
  CHECK(d.records[3].row == 7);
}

TEST_CASE("CSV pulse data: every malformed input names file, line, column and key", "[calibration]") {
  const std::string header = "device,cycle,pulse,polarity,conductance [uS]\n";
  auto error_of = [](const std::string& text) {
    try {
      parse_pulse_csv(text, "m.csv");
    } catch (const UserError& e) {
      return std::string(e.what());
    }
    return std::string("no error");
  };
  CHECK(error_of(header + "0,0,0,potentiate,1\n0,0,2,potentiate,2\n0,0,1,potentiate,3\n") ==
        "m.csv:4: error: 'pulse': pulse numbers of a ramp (device 0, cycle 0, potentiate) must increase; 1 follows 2 "
        "(row 3)");
  CHECK(error_of(header + "0,0,0,potentiate,1\n0,0,0,potentiate,2\n") ==
        "m.csv:3: error: 'pulse': pulse 0 of device 0, cycle 0, potentiate appears twice (rows 2 and 3); repeated "
        "reads of one state need a read_time column");
  CHECK(error_of(header + "0,0,0,potentiate,-1\n") ==
        "m.csv:2:18: error: 'conductance': a conductance cannot be negative, got '-1'");
  CHECK(error_of(header + "0,0,0,potentiate,nan\n") ==
        "m.csv:2:18: error: 'conductance': 'nan' is not a finite number");
  CHECK(error_of(header + "0,0,0,up,1\n") ==
        "m.csv:2:7: error: 'polarity': 'up' is not a polarity; expected potentiate or depress (or + or -)");
  CHECK(error_of(header + "a,0,0,potentiate,1\n") ==
        "m.csv:2:1: error: 'device': 'a' is not a whole number from 0 to 4294967295");
  CHECK(error_of(header + "0,0,0,potentiate\n") ==
        "m.csv:2:1: error: 'conductance': expected 5 values as in the header, found 4");
  CHECK(error_of("device,cycle,pulse,polarity,conductance\n") ==
        "m.csv:1:29: error: 'conductance': the column needs its unit in brackets, e.g. \"conductance [uS]\"");
  CHECK(error_of("device,cycle,pulse,polarity,conductance [ms]\n") ==
        "m.csv:1:29: error: 'conductance': the unit is a time, expected a conductance");
  CHECK(error_of("device,cycle,pulse,polarity,conductance [uS],temperature [K]\n") ==
        "m.csv:1:46: error: 'temperature': unknown column; expected the header device,cycle,pulse,polarity,conductance "
        "[uS] (optionally ,read_time [s])");
  CHECK(error_of("device,cycle,polarity,conductance [uS]\n") ==
        "m.csv:1:1: error: 'pulse': the header lacks this column; expected device,cycle,pulse,polarity,"
        "conductance [uS] (optionally ,read_time [s])");
  CHECK(error_of(header) == "m.csv:1: error: 'conductance': the file holds a header but no measurements");
  CHECK(error_of("") ==
        "m.csv: error: 'device': the file holds no header; expected device,cycle,pulse,polarity,"
        "conductance [uS] (optionally ,read_time [s])");
  CHECK(error_of("device,cycle,pulse,polarity,conductance [uS],read_time [s]\n0,0,0,+,1,2\n0,0,0,+,1,1\n") ==
        "m.csv:3: error: 'read_time': repeated reads of pulse 0 of device 0, cycle 0, potentiate must have "
        "increasing read times; 1 s follows 2 s (row 2)");
}
