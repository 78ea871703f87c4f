// pcasweep/cli/command.hpp — the table of subcommands.
//
// Contract: each subcommand lives in its own file and provides a setup
// function that declares its options on a CLI11 subcommand and returns the
// action to run once the command line has parsed. Actions return the exit
// code; they throw pcasweep::Error for anything the user must fix.
#pragma once

#include <CLI/CLI.hpp>
#include <functional>

namespace pcasweep::cli {

using Action = std::function<int()>;

struct Command {
  const char* name;
  const char* summary;
  Action (*setup)(CLI::App& sub);
};

Action setup_sweep(CLI::App& sub);
Action setup_spectrum(CLI::App& sub);
Action setup_demo(CLI::App& sub);

// Every subcommand, in the order `pcasweep --help` lists them.
inline const Command kCommands[] = {
    {"sweep", "Reconstruct an image at several k and measure each: tables, images, summary.json", setup_sweep},
    {"spectrum", "Print the eigenvalue spectrum of an image's patches and check it against the trace",
     setup_spectrum},
    {"demo", "Run the sweep on the bundled Tern Point samples", setup_demo},
};

}  // namespace pcasweep::cli
