// Test driver for lif_closed_form.py: runs one LIF neuron (LifBank, the code the
// kernel uses) through a script of inputs and prints its state at each sample, so
// that Python can compare it with the closed form evaluated in multiprecision.
//
// stdin, one command per line (SI units, times in s, currents in A):
//   params <tau_m> <tau_exc> <tau_inh> <capacitance> <v_rest> <v_init> <bias>
//   exc <t> <w>      excitatory synaptic input of w at t
//   inh <t> <w>      inhibitory synaptic input of w at t
//   sample <t>       print "sample <t> <v> <i_exc> <i_inh>" (shortest round-trip decimals)
// Commands are applied in the order given (times must not decrease). The threshold
// is put at +10 V so the neuron never fires; the last line is "spikes <count>".
#include <fmt/format.h>

#include <iostream>
#include <memory>
#include <sstream>
#include <string>
#include <vector>

#include "neurons/lif.hpp"

int main() {
  using namespace nvsyn;
  std::unique_ptr<LifBank> group;
  std::vector<double> spikes;
  std::vector<double> samples(4);
  PlainInputs hooks;
  std::string line;
  while (std::getline(std::cin, line)) {
    std::istringstream in(line);
    std::string command;
    if (!(in >> command)) continue;
    if (command == "params") {
      LifParameters p;
      double v_init = 0.0;
      in >> p.tau_m >> p.tau_exc >> p.tau_inh >> p.capacitance >> p.v_rest >> v_init >> p.bias;
      p.v_threshold = 10.0;
      p.v_reset = p.v_rest;
      p.v_init = Distribution::constant(v_init);
      group = std::make_unique<LifBank>(1, p, 1, 0);
      continue;
    }
    if (!group) {
      std::cerr << "lif_probe: 'params' must come first\n";
      return 2;
    }
    NeuronInput input;
    in >> input.time;
    if (command == "exc" || command == "inh") {
      in >> input.amount;
      input.receptor = command == "exc" ? Receptor::excitatory : Receptor::inhibitory;
    } else if (command == "sample") {
      input.kind = InputKind::sample;
    } else {
      std::cerr << "lif_probe: unknown command '" << command << "'\n";
      return 2;
    }
    if (!in) {
      std::cerr << "lif_probe: cannot read '" << line << "'\n";
      return 2;
    }
    try {
      group->process(0, std::span<const NeuronInput>(&input, 1), input.time, spikes, samples, hooks);
    } catch (const std::exception& e) {
      std::cerr << "lif_probe: " << e.what() << "\n";
      return 1;
    }
    if (input.kind == InputKind::sample)
      fmt::print("sample {} {} {} {}\n", input.time, samples[0], samples[1], samples[2]);
  }
  fmt::print("spikes {}\n", spikes.size());
  return 0;
}
