// TEMPORARY, for the recordings branch only: a weak stand-in for open_soapy() until the SoapySDR source
// (devices/soapy_source.cpp, another branch) is merged; its strong definition replaces this one at link
// time. Delete this file when merging that branch.
#include "devices/source.hpp"
#include "dsp/errors.hpp"

namespace hb {

[[gnu::weak]] std::unique_ptr<SampleSource> open_soapy(const SourceSpec& spec, const Setup&) {
    throw InputError("device \"" + spec.args + "\": SoapySDR sources are not part of this build yet");
}

}  // namespace hb
