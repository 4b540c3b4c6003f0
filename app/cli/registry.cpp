// The list of hetbench commands, one line each (merge=union in .gitattributes: additions from parallel
// branches simply accumulate).
#include "cli/commands.hpp"

namespace hb::cli {

void register_all(CLI::App& app, int& rc) {
    register_check(app, rc);
    register_plan(app, rc);
    register_devices(app, rc);
    register_record(app, rc);
    register_filter(app, rc);
    register_gui(app, rc);
    register_bench(app, rc);
    register_synth(app, rc);
    register_verify(app, rc);
    register_soak(app, rc);
    register_sweep(app, rc);
}

}  // namespace hb::cli
