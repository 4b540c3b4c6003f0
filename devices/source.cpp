#include "devices/source.hpp"

namespace hb {

std::unique_ptr<SampleSource> open_source(const SourceSpec& spec, const Setup& setup) {
    switch (spec.kind) {
        case SourceKind::recording: return open_recording(spec, setup);
        case SourceKind::device:
        case SourceKind::generator: return open_soapy(spec, setup);
    }
    return nullptr;
}

}  // namespace hb
