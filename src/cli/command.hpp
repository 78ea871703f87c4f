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

// batch's quality goal when none is given (--target-psnr, dB; --coverage keeps
// CoverageTarget's 95 %), shared with demo's batch so the two recommend alike.
inline constexpr double kDefaultBatchTargetPsnr = 40.0;

struct Command {
  const char* name;
  const char* summary;
  Action (*setup)(CLI::App& sub);
};

Action setup_sweep(CLI::App& sub);
Action setup_spectrum(CLI::App& sub);
Action setup_demo(CLI::App& sub);
Action setup_fit(CLI::App& sub);
Action setup_encode(CLI::App& sub);
Action setup_decode(CLI::App& sub);
Action setup_compare(CLI::App& sub);
Action setup_batch(CLI::App& sub);

// Every subcommand, in the order `pcasweep --help` lists them.
inline const Command kCommands[] = {
    {"sweep", "Reconstruct an image at several k and measure each: tables, images, summary.json", setup_sweep},
    {"spectrum", "Print the eigenvalue spectrum of an image's patches and check it against the trace",
     setup_spectrum},
    {"batch", "Sweep many images (files, folders, patterns, @lists): per-file or shared basis, a k for the "
              "whole batch, report.html",
     setup_batch},
    {"demo", "Run the sweep on the bundled Tern Point samples", setup_demo},
    {"fit", "Learn a basis from one or more images and save it for encode/decode", setup_fit},
    {"encode", "Encode an image into a compact file: k components, water-filled quantiser, adaptive range coder", setup_encode},
    {"decode", "Decode a file written by encode (or sweep) back into a PNG", setup_decode},
    {"compare", "Compare an image with another: MSE, PSNR and SSIM per channel (optional SSIM map)",
     setup_compare},
};

}  // namespace pcasweep::cli
