// Round trips through RunWriter and RunReader: what is written is what is read.
#include "record/run_writer.hpp"

#include <hdf5.h>
#include <sys/wait.h>
#include <unistd.h>

#include <catch2/catch.hpp>
#include <cstdint>
#include <filesystem>
#include <fstream>
#include <regex>
#include <string>
#include <vector>

#include "core/error.hpp"
#include "record/run_reader.hpp"

namespace {

using nvsyn::Dimension;
using nvsyn::RunHeader;
using nvsyn::RunReader;
using nvsyn::RunStatus;
using nvsyn::RunWriter;

// A path in the temporary directory, unique per process and test, removed afterwards.
class TempPath {
 public:
  explicit TempPath(const std::string& stem)
      : path_(std::filesystem::temp_directory_path() /
              ("nvsyn_" + stem + "_" + std::to_string(::getpid()) + ".h5")) {
    std::filesystem::remove(path_);
  }
  ~TempPath() {
    std::error_code ignored;
    std::filesystem::remove(path_, ignored);
  }
  TempPath(const TempPath&) = delete;
  TempPath& operator=(const TempPath&) = delete;
  std::string str() const { return path_.string(); }

 private:
  std::filesystem::path path_;
};

RunHeader example_header() {
  RunHeader header;
  header.nvsyn_version = "0.1.0-test";
  header.seed = 0xFEDC'BA98'7654'3210ULL;  // above 2^63: checks the full 64 bits survive
  header.duration = 2.5;
  header.model_text = "[simulation]\nduration = \"2.5 s\"\n# tau = 20 \xC2\xB5s\n";  // UTF-8 'µ'
  header.model_file = "models/example.toml";
  return header;
}

// Overwrites an existing integer root attribute with the HDF5 C API, to make a file
// that the writer itself would never produce.
void overwrite_int_root_attr(const std::string& path, const char* name, int value) {
  const hid_t file = H5Fopen(path.c_str(), H5F_ACC_RDWR, H5P_DEFAULT);
  REQUIRE(file >= 0);
  const hid_t attr = H5Aopen(file, name, H5P_DEFAULT);
  REQUIRE(attr >= 0);
  CHECK(H5Awrite(attr, H5T_NATIVE_INT, &value) >= 0);
  H5Aclose(attr);
  H5Fclose(file);
}

}  // namespace

TEST_CASE("run status names round-trip", "[record]") {
  for (RunStatus s : {RunStatus::running, RunStatus::complete, RunStatus::interrupted, RunStatus::failed}) {
    const auto parsed = nvsyn::parse_run_status(nvsyn::run_status_name(s));
    REQUIRE(parsed.has_value());
    CHECK(*parsed == s);
  }
  CHECK(nvsyn::run_status_name(RunStatus::complete) == "complete");
  CHECK_FALSE(nvsyn::parse_run_status("done").has_value());
}

TEST_CASE("root attributes round-trip", "[record]") {
  TempPath file("attrs");
  const RunHeader header = example_header();
  {
    RunWriter writer(file.str(), header);
    writer.finish(RunStatus::complete, 2.5);
  }
  const nvsyn::RunFileInfo info = nvsyn::read_run_file(file.str());
  CHECK(info.path == file.str());
  CHECK(info.layout == "nvsyn-run");
  CHECK(info.layout_version == 1);
  CHECK(info.nvsyn_version == header.nvsyn_version);
  CHECK(info.seed == header.seed);
  CHECK(info.status == RunStatus::complete);
  CHECK(info.duration == header.duration);
  REQUIRE(info.time_reached.has_value());
  CHECK(*info.time_reached == 2.5);
  CHECK(info.model_text == header.model_text);
  CHECK(info.model_file == header.model_file);
  CHECK(std::regex_match(info.created, std::regex(R"(\d{4}-\d\d-\d\dT\d\d:\d\d:\d\dZ)")));
  CHECK(info.populations.empty());
  CHECK(info.pathways.empty());
  CHECK(info.traces.empty());
}

TEST_CASE("model text beyond the 64 KiB compact-attribute limit round-trips", "[record]") {
  TempPath file("big_model");
  RunHeader header = example_header();
  header.model_text.clear();
  for (int i = 0; header.model_text.size() < 300'000; ++i)
    header.model_text += "# line " + std::to_string(i) + " of a long model file\n";
  {
    RunWriter writer(file.str(), header);
    writer.finish(RunStatus::complete, header.duration);
  }
  CHECK(nvsyn::read_run_file(file.str()).model_text == header.model_text);
}

TEST_CASE("spikes appended across several flushes read back unchanged", "[record]") {
  TempPath file("spikes");
  // More spikes than one internal buffer holds, so automatic writes, explicit
  // flushes and the final write at finish() all contribute.
  constexpr std::uint32_t kNeurons = 97;
  constexpr std::size_t kBatches = 40;
  constexpr std::size_t kPerBatch = 5003;
  std::vector<double> all_times;
  std::vector<std::uint32_t> all_neurons;
  {
    RunWriter writer(file.str(), example_header());
    writer.describe_population("exc", kNeurons, "lif");
    writer.describe_population("quiet", 4, "lif");
    const int exc = writer.open_spikes("exc");
    const int quiet = writer.open_spikes("quiet");
    for (std::size_t b = 0; b < kBatches; ++b) {
      std::vector<double> times;
      std::vector<std::uint32_t> neurons;
      for (std::size_t i = 0; i < kPerBatch; ++i) {
        const std::size_t k = b * kPerBatch + i;
        times.push_back(static_cast<double>(k / 3) * 1e-5);  // ties in groups of three
        neurons.push_back(static_cast<std::uint32_t>((k * 31) % kNeurons));
      }
      writer.append_spikes(exc, times, neurons);
      writer.append_spikes(quiet, {}, {});
      all_times.insert(all_times.end(), times.begin(), times.end());
      all_neurons.insert(all_neurons.end(), neurons.begin(), neurons.end());
      if (b % 7 == 3) writer.flush();
    }
    writer.finish(RunStatus::complete, 2.5);
  }
  RunReader reader(file.str());
  const auto& populations = reader.info().populations;
  REQUIRE(populations.size() == 2);
  CHECK(populations[0].name == "exc");  // order of description, not of the alphabet
  CHECK(populations[0].size == kNeurons);
  CHECK(populations[0].neuron_model == "lif");
  CHECK(populations[0].has_spikes);
  CHECK(populations[1].name == "quiet");

  const nvsyn::SpikeData exc = reader.read_spikes("exc");
  REQUIRE(exc.times.size() == kBatches * kPerBatch);
  CHECK(exc.times == all_times);
  CHECK(exc.neurons == all_neurons);
  const nvsyn::SpikeData quiet = reader.read_spikes("quiet");
  CHECK(quiet.times.empty());
  CHECK(quiet.neurons.empty());
  REQUIRE_THROWS_WITH(reader.read_spikes("absent"),
                      "error: run file '" + file.str() + "': no spikes recorded for population 'absent'");
}

TEST_CASE("a run that never finishes keeps status running and its recorded spikes", "[record]") {
  TempPath file("unfinished");
  {
    RunWriter writer(file.str(), example_header());
    writer.describe_population("exc", 3, "lif");
    const int exc = writer.open_spikes("exc");
    const std::vector<double> t1{0.001, 0.002};
    const std::vector<std::uint32_t> n1{0, 2};
    writer.append_spikes(exc, t1, n1);
    writer.flush();
    const std::vector<double> t2{0.004};
    const std::vector<std::uint32_t> n2{1};
    writer.append_spikes(exc, t2, n2);  // still buffered when the writer goes away
  }
  RunReader reader(file.str());
  CHECK(reader.info().status == RunStatus::running);
  CHECK_FALSE(reader.info().time_reached.has_value());
  const nvsyn::SpikeData spikes = reader.read_spikes("exc");
  CHECK(spikes.times == std::vector<double>{0.001, 0.002, 0.004});
  CHECK(spikes.neurons == std::vector<std::uint32_t>{0, 2, 1});
}

TEST_CASE("a writer killed after flush() leaves a readable file with what was flushed", "[record]") {
  TempPath file("crash");
  // The child process stands in for a crashed run: it ends without destructors,
  // so nothing after the last flush() reaches the file.
  const pid_t child = ::fork();
  REQUIRE(child >= 0);
  if (child == 0) {
    try {
      RunWriter writer(file.str(), example_header());
      writer.describe_population("exc", 3, "lif");
      const int exc = writer.open_spikes("exc");
      writer.append_spikes(exc, std::vector<double>{0.001, 0.002}, std::vector<std::uint32_t>{0, 2});
      writer.flush();
      writer.append_spikes(exc, std::vector<double>{0.004}, std::vector<std::uint32_t>{1});
      ::_exit(0);
    } catch (...) {
      ::_exit(1);
    }
  }
  int wait_status = 0;
  REQUIRE(::waitpid(child, &wait_status, 0) == child);
  REQUIRE(WIFEXITED(wait_status));
  REQUIRE(WEXITSTATUS(wait_status) == 0);

  RunReader reader(file.str());
  CHECK(reader.info().status == RunStatus::running);
  const nvsyn::SpikeData spikes = reader.read_spikes("exc");
  CHECK(spikes.times == std::vector<double>{0.001, 0.002});
  CHECK(spikes.neurons == std::vector<std::uint32_t>{0, 2});
}

TEST_CASE("finish records interrupted runs and the time reached", "[record]") {
  TempPath file("interrupted");
  {
    RunWriter writer(file.str(), example_header());
    writer.finish(RunStatus::interrupted, 0.8125);
    REQUIRE_THROWS_AS(writer.finish(RunStatus::complete, 2.5), nvsyn::InternalError);
    REQUIRE_THROWS_WITH(writer.flush(), "run file '" + file.str() + "': flush after finish()");
  }
  const auto info = nvsyn::read_run_file(file.str());
  CHECK(info.status == RunStatus::interrupted);
  REQUIRE(info.time_reached.has_value());
  CHECK(*info.time_reached == 0.8125);
}

TEST_CASE("pathways round-trip, including one with no synapses", "[record]") {
  TempPath file("pathways");
  const std::vector<std::uint32_t> pre{0, 0, 2};
  const std::vector<std::uint32_t> post{1, 3, 0};
  const std::vector<double> delay{1e-3, 1.5e-3, 2e-3};
  const std::vector<double> weight{2e-10, -1e-10, 3.25e-10};
  {
    RunWriter writer(file.str(), example_header());
    writer.write_pathway({"exc_to_inh", "exc", "inh", "stdp_pair", "ideal", "excitatory", pre, post, delay, weight});
    writer.write_pathway({"empty", "inh", "exc", "none", "ideal", "inhibitory", {}, {}, {}, {}});
    writer.finish(RunStatus::complete, 2.5);
  }
  RunReader reader(file.str());
  const auto& pathways = reader.info().pathways;
  REQUIRE(pathways.size() == 2);
  CHECK(pathways[0].name == "exc_to_inh");
  CHECK(pathways[0].source == "exc");
  CHECK(pathways[0].target == "inh");
  CHECK(pathways[0].rule == "stdp_pair");
  CHECK(pathways[0].device == "ideal");
  CHECK(pathways[0].receptor == "excitatory");
  CHECK(pathways[0].synapses == 3);
  CHECK(pathways[1].name == "empty");
  CHECK(pathways[1].synapses == 0);

  const nvsyn::PathwayData stored = reader.read_pathway("exc_to_inh");
  CHECK(stored.pre == pre);
  CHECK(stored.post == post);
  CHECK(stored.delay == delay);
  CHECK(stored.weight == weight);
  const nvsyn::PathwayData empty = reader.read_pathway("empty");
  CHECK(empty.pre.empty());
  CHECK(empty.weight.empty());
}

TEST_CASE("traces keep their shape, neurons and units", "[record]") {
  TempPath file("traces");
  const std::vector<std::uint32_t> recorded{4, 0, 7};
  std::vector<double> expected_times;
  std::vector<double> expected_values;
  constexpr int kRows = 30'000;  // 90'000 values: more than one internal buffer
  {
    RunWriter writer(file.str(), example_header());
    writer.describe_population("exc", 8, "lif");
    const int v = writer.open_trace("exc", "v", Dimension::voltage, recorded);
    const int nothing = writer.open_trace("exc", "g_syn", Dimension::conductance, {});
    const int ratio = writer.open_trace("exc", "occupancy", Dimension::dimensionless, std::vector<std::uint32_t>{1});
    for (int k = 0; k < kRows; ++k) {
      const double t = k * 1e-4;
      const std::vector<double> row{-0.065 + k * 1e-7, -0.070, -0.050 - k * 1e-8};
      writer.append_trace_row(v, t, row);
      writer.append_trace_row(nothing, t, {});
      writer.append_trace_row(ratio, t, std::vector<double>{0.5});
      expected_times.push_back(t);
      expected_values.insert(expected_values.end(), row.begin(), row.end());
      if (k == 1000) writer.flush();
    }
    writer.finish(RunStatus::complete, 2.5);
  }
  RunReader reader(file.str());
  const auto& traces = reader.info().traces;
  REQUIRE(traces.size() == 3);
  CHECK(traces[0].population == "exc");
  CHECK(traces[0].variable == "v");
  CHECK(traces[0].units == "V");
  CHECK(traces[0].samples == kRows);
  CHECK(traces[0].neurons == 3);
  CHECK(traces[1].units == "S");
  CHECK(traces[1].neurons == 0);
  CHECK(traces[2].units == "1");

  const nvsyn::TraceData v = reader.read_trace("exc", "v");
  CHECK(v.units == "V");
  CHECK(v.neurons == recorded);
  CHECK(v.times == expected_times);
  CHECK(v.values == expected_values);
  const nvsyn::TraceData nothing = reader.read_trace("exc", "g_syn");
  CHECK(nothing.times.size() == static_cast<std::size_t>(kRows));
  CHECK(nothing.neurons.empty());
  CHECK(nothing.values.empty());
}

TEST_CASE("the writer rejects data that breaks the layout's promises", "[record]") {
  TempPath file("invariants");
  RunWriter writer(file.str(), example_header());
  const std::string prefix = "run file '" + file.str() + "': ";
  REQUIRE_THROWS_WITH(writer.open_spikes("exc"), prefix + "open_spikes('exc') before describe_population");
  writer.describe_population("exc", 3, "lif");
  const int exc = writer.open_spikes("exc");
  const std::vector<double> times{0.002, 0.001};
  const std::vector<std::uint32_t> neurons{0, 1};
  REQUIRE_THROWS_WITH(writer.append_spikes(exc, times, neurons),
                      prefix + "spike of 'exc' neuron 1 at t = 0.001 s is not finite or comes before the previous "
                               "spike at 0.002 s");
  const std::vector<double> later{0.003};
  const std::vector<std::uint32_t> outside{3};
  REQUIRE_THROWS_WITH(writer.append_spikes(exc, later, outside),
                      prefix + "spike of 'exc' at t = 0.003 s names neuron 3, but the population has 3 neurons");
  REQUIRE_THROWS_WITH(writer.describe_population("a/b", 1, "lif"),
                      "error: population name 'a/b' cannot be stored in a run file: names must be non-empty, not "
                      "'.', and contain no '/'");
  REQUIRE_THROWS_AS(writer.write_pathway({"p", "exc", "exc", "none", "ideal", "excitatory",
                                          std::vector<std::uint32_t>{0}, {}, {}, {}}),
                    nvsyn::InternalError);
}

TEST_CASE("run file errors name the file", "[record]") {
  SECTION("cannot create") {
    const std::string path = "/nonexistent-nvsyn-dir/run.h5";
    REQUIRE_THROWS_WITH(RunWriter(path, example_header()),
                        "error: cannot create run file '" + path + "': No such file or directory");
  }
  SECTION("missing file") {
    TempPath file("missing");
    REQUIRE_THROWS_WITH(RunReader(file.str()), "error: cannot open run file '" + file.str() + "': no such file");
  }
  SECTION("not an HDF5 file") {
    TempPath file("text");
    std::ofstream(file.str()) << "population  neurons\n";
    REQUIRE_THROWS_WITH(RunReader(file.str()),
                        "error: cannot open run file '" + file.str() + "': not an HDF5 file");
  }
  SECTION("HDF5 but not a run file") {
    TempPath file("foreign");
    const hid_t h = H5Fcreate(file.str().c_str(), H5F_ACC_TRUNC, H5P_DEFAULT, H5P_DEFAULT);
    REQUIRE(h >= 0);
    H5Fclose(h);
    REQUIRE_THROWS_WITH(RunReader(file.str()), "error: '" + file.str() +
                                                   "' is not an nvsyn run file: it has no root attribute 'layout'");
  }
  SECTION("HDF5 with another layout") {
    TempPath file("other_layout");
    const hid_t h = H5Fcreate(file.str().c_str(), H5F_ACC_TRUNC, H5P_DEFAULT, H5P_DEFAULT);
    REQUIRE(h >= 0);
    const hid_t type = H5Tcopy(H5T_C_S1);
    H5Tset_size(type, H5T_VARIABLE);
    const hid_t space = H5Screate(H5S_SCALAR);
    const hid_t attr = H5Acreate2(h, "layout", type, space, H5P_DEFAULT, H5P_DEFAULT);
    const char* value = "other";
    CHECK(H5Awrite(attr, type, &value) >= 0);
    H5Aclose(attr);
    H5Sclose(space);
    H5Tclose(type);
    H5Fclose(h);
    REQUIRE_THROWS_WITH(RunReader(file.str()),
                        "error: '" + file.str() +
                            "' is not an nvsyn run file: root attribute 'layout' is 'other', expected 'nvsyn-run'");
  }
  SECTION("another layout version") {
    TempPath file("version");
    RunWriter(file.str(), example_header()).finish(RunStatus::complete, 1.0);
    overwrite_int_root_attr(file.str(), "layout_version", 2);
    REQUIRE_THROWS_WITH(RunReader(file.str()),
                        "error: run file '" + file.str() + "' has layout version 2; this nvsyn reads version 1");
  }
}
