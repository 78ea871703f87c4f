// pcasweep — one main, a table of subcommands (cli/command.hpp), no magic.
#include <iostream>
#include <map>

#include "cli/command.hpp"
#include "core/error.hpp"
#include "core/interrupt.hpp"
#include "solve/blas_runtime.hpp"

int main(int argc, char** argv) {
  using namespace pcasweep;
  // First: may restart pcasweep once with OPENBLAS_CORETYPE set (solve/blas_runtime.hpp).
  blas_startup(argv);
  // SIGINT/SIGTERM remove unfinished files and exit 130/143; SIGXFSZ becomes a write error.
  install_interrupt_handlers();
  CLI::App app{"pcasweep: how many principal components do your images and signals need, "
               "and what does each choice cost and save?"};
  app.set_version_flag("--version", std::string("pcasweep ") + PCASWEEP_VERSION);
  app.require_subcommand(1, 1);
  std::map<CLI::App*, cli::Action> actions;
  for (const auto& command : cli::kCommands) {
    CLI::App* sub = app.add_subcommand(command.name, command.summary);
    actions[sub] = command.setup(*sub);
  }
  try {
    app.parse(argc, argv);
  } catch (const CLI::CallForHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForAllHelp& e) {
    return app.exit(e);
  } catch (const CLI::CallForVersion& e) {
    return app.exit(e);
  } catch (const CLI::ParseError& e) {
    std::cerr << "pcasweep: " << e.what() << " (see pcasweep --help)\n";
    return 2;
  }
  try {
    for (auto& [sub, action] : actions)
      if (sub->parsed()) return action();
    return 2;
  } catch (const Error& e) {
    std::cerr << "pcasweep: " << e.what() << "\n";
    return e.exit_code();
  } catch (const std::bad_alloc&) {
    std::cerr << "pcasweep: out of memory\n";
    return 1;
  } catch (const std::exception& e) {
    std::cerr << "pcasweep: internal error: " << e.what() << "\n";
    return 1;
  }
}
