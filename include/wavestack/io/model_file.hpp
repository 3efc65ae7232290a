#pragma once
/// \file
/// Saving and loading a trained network as one file ("model file", .wsm).
///
/// Format, version 2 (1 without a kernel term). All integers are unsigned little-endian, all reals
/// IEEE-754 binary64 little-endian; every value is encoded and decoded byte
/// by byte, so a file reads the same on any host.
///
///   offset  size  field
///   0       8     magic: 0x89 'W' 'S' 'M' 0x0D 0x0A 0x1A 0x0A
///   8       4     format version: 2 when a KERN section is present, else 1,
///                 so readers that predate KERN refuse such a model instead
///                 of skipping the term and predicting something else
///   12      4     scalar code: 8 = binary64 (the only one version 1 defines)
///   16      8     payload length P in bytes
///   24      4     CRC-32 (ISO 3309) of the payload
///   28      4     CRC-32 of bytes 0..27
///   32      P     payload: sections, each a 4-byte ASCII tag, a u64 body
///                 length and the body. Readers skip tags they do not know.
///
/// Sections of version 1, in this order (all required unless marked):
///   "SHAP" u32 d (inputs), u32 m (outputs), u32 layers (>= 1),
///          u32 state input (0 running prediction, 1 residual state)
///   "SCAL" f64 box lower[d], box upper[d], output mean[m], output deviation[m]
///   "LAYR" once per layer: u32 group count G; per group: u8 kind
///          (0 Fourier, 1 ridge), u8 source (0 input, 1 state), u16 zero,
///          u64 rows K, u64 columns C, f64 parameters[K * C] row by row;
///          then u64 amplitude rows A, f64 amplitudes[A * m] row by row
///   "DOMN" (optional) f64 lower[d], upper[d], mean[d], covariance[d * d]
///          row by row, shape limit
///   "NAME" (optional) u32 count, then count x (u32 length, UTF-8 bytes):
///          d input names, then m output names
///   "METR" (optional) u32 count, then count x f64 {rmse, relative rmse,
///          max abs error, R^2, correlation}
///   "SETT" (optional) u32 length, UTF-8 text
///   "HIST" (optional) u32 count, then count x (u32 layer, f64 training
///          RMSE, f64 validation RMSE)
///   "TUNH" (optional) u32 count, then count x (u32 epoch, f64 training
///          RMSE, f64 validation RMSE)
///   "TIME" (optional) f64 fit wall time in seconds
///   "KERN" (optional, version 2) u64 centres J, then f64 widths[d],
///          centres[J * d] row by row, weights[J * m] row by row
///          (model/kernel_term.hpp)
///
/// Loading trusts nothing: every count is checked against the bytes that
/// remain before anything is allocated, every real must be finite where the
/// model needs it finite, and every error names what was wrong and the byte
/// offset where it was found.

#include <cerrno>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <cstring>
#include <fstream>
#include <iterator>
#include <limits>
#include <string>
#include <vector>

#include "wavestack/core/error.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/detail/crc32.hpp"
#include "wavestack/model/network.hpp"

namespace wavestack {

/// A model file (or buffer) that cannot be read; `offset()` is the byte
/// where the problem was found.
class ModelFileError : public Error {
public:
    ModelFileError(const std::string& problem, std::size_t offset, const std::string& source = "")
        : Error("model file" + (source.empty() ? std::string() : " '" + source + "'") + ": " + problem +
                " (byte offset " + std::to_string(offset) + ")"),
          m_problem(problem), m_offset(offset)
    {
    }
    /// What was wrong, without the file name and offset.
    const std::string& problem() const { return m_problem; }
    std::size_t offset() const { return m_offset; }

private:
    std::string m_problem;
    std::size_t m_offset;
};

namespace modelfile {

constexpr unsigned char magic[8] = {0x89, 'W', 'S', 'M', 0x0D, 0x0A, 0x1A, 0x0A};
constexpr std::uint32_t formatVersion = 2;
/// The version written for a model without a kernel term: readable by every release.
constexpr std::uint32_t baseVersion = 1;
constexpr std::uint32_t binary64 = 8;
constexpr std::size_t headerSize = 32;

}  // namespace modelfile

namespace detail {

class ByteWriter {
public:
    void bytes(const void* data, std::size_t size)
    {
        const auto* p = static_cast<const unsigned char*>(data);
        m_out.insert(m_out.end(), p, p + size);
    }
    void u8(std::uint8_t v) { m_out.push_back(v); }
    void u16(std::uint16_t v) { unsignedLe(v, 2); }
    void u32(std::uint32_t v) { unsignedLe(v, 4); }
    void u64(std::uint64_t v) { unsignedLe(v, 8); }
    void f64(double v)
    {
        std::uint64_t bits;
        std::memcpy(&bits, &v, 8);
        u64(bits);
    }
    void text(const std::string& s)
    {
        u32(static_cast<std::uint32_t>(s.size()));
        bytes(s.data(), s.size());
    }
    std::vector<unsigned char>& buffer() { return m_out; }

private:
    void unsignedLe(std::uint64_t v, int count)
    {
        for (int i = 0; i < count; ++i)
            m_out.push_back(static_cast<unsigned char>(v >> (8 * i)));
    }
    std::vector<unsigned char> m_out;
};

class ByteReader {
public:
    ByteReader(const unsigned char* data, std::size_t size, std::size_t base = 0)
        : m_data(data), m_size(size), m_base(base)
    {
    }

    std::size_t offset() const { return m_base + m_position; }
    std::size_t remaining() const { return m_size - m_position; }
    bool atEnd() const { return m_position == m_size; }

    [[noreturn]] void fail(const std::string& what) const { throw ModelFileError(what, offset()); }

    void need(std::size_t count, const char* what) const
    {
        if (count > remaining())
            fail(std::string("truncated: ") + what + " needs " + std::to_string(count) + " bytes, " +
                 std::to_string(remaining()) + " remain");
    }
    std::uint64_t unsignedLe(int count, const char* what)
    {
        need(std::size_t(count), what);
        std::uint64_t v = 0;
        for (int i = 0; i < count; ++i)
            v |= std::uint64_t(m_data[m_position + std::size_t(i)]) << (8 * i);
        m_position += std::size_t(count);
        return v;
    }
    std::uint8_t u8(const char* what) { return static_cast<std::uint8_t>(unsignedLe(1, what)); }
    std::uint16_t u16(const char* what) { return static_cast<std::uint16_t>(unsignedLe(2, what)); }
    std::uint32_t u32(const char* what) { return static_cast<std::uint32_t>(unsignedLe(4, what)); }
    std::uint64_t u64(const char* what) { return unsignedLe(8, what); }
    double f64(const char* what)
    {
        const std::uint64_t bits = u64(what);
        double v;
        std::memcpy(&v, &bits, 8);
        return v;
    }
    /// A finite real; NaN or infinity names the field and its offset.
    double finite(const char* what)
    {
        const std::size_t at = offset();
        const double v = f64(what);
        if (!std::isfinite(v))
            throw ModelFileError(std::string(what) + " is " + (std::isnan(v) ? "NaN" : "infinite"), at);
        return v;
    }
    /// `count` values of `size` bytes each must fit in what remains: checked
    /// before any allocation, so a header claiming 2^60 entries costs nothing.
    void needItems(std::uint64_t count, std::size_t size, const char* what) const
    {
        if (count > remaining() / size)
            fail(std::string(what) + ": " + std::to_string(count) + " entries of " + std::to_string(size) +
                 " bytes do not fit in the " + std::to_string(remaining()) + " bytes that remain");
    }
    std::string text(const char* what)
    {
        const std::uint32_t length = u32(what);
        needItems(length, 1, what);
        std::string s(reinterpret_cast<const char*>(m_data + m_position), length);
        m_position += length;
        return s;
    }
    /// rows x cols finite reals stored row by row.
    Matrix finiteMatrix(std::uint64_t rows, std::uint64_t cols, const char* what)
    {
        if (cols != 0 && rows > std::numeric_limits<std::uint64_t>::max() / cols)
            fail(std::string(what) + ": size overflows");
        needItems(rows * cols, 8, what);
        Matrix a(static_cast<Index>(rows), static_cast<Index>(cols));
        for (Index i = 0; i < a.rows(); ++i)
            for (Index j = 0; j < a.cols(); ++j)
                a(i, j) = finite(what);
        return a;
    }
    Vector finiteVector(std::uint64_t size, const char* what) { return finiteMatrix(size, 1, what).col(0); }
    /// A sub-reader over the next `size` bytes, which this reader skips.
    ByteReader section(std::size_t size, const char* what)
    {
        need(size, what);
        ByteReader sub(m_data + m_position, size, offset());
        m_position += size;
        return sub;
    }

private:
    const unsigned char* m_data;
    std::size_t m_size;
    std::size_t m_base;
    std::size_t m_position = 0;
};

inline void writeMatrix(ByteWriter& out, const Matrix& a)
{
    for (Index i = 0; i < a.rows(); ++i)
        for (Index j = 0; j < a.cols(); ++j)
            out.f64(a(i, j));
}

inline void writeSection(ByteWriter& payload, const char tag[4], ByteWriter& body)
{
    payload.bytes(tag, 4);
    payload.u64(body.buffer().size());
    payload.bytes(body.buffer().data(), body.buffer().size());
}

/// A training curve (HIST, TUNH): u32 count, then count x (u32 step, f64
/// training RMSE, f64 validation RMSE); nothing is written for an empty curve.
template <class Step>
void writeCurve(ByteWriter& payload, const char tag[4], const std::vector<Step>& curve, Index Step::*step)
{
    if (curve.empty())
        return;
    ByteWriter s;
    s.u32(std::uint32_t(curve.size()));
    for (const Step& point : curve) {
        s.u32(std::uint32_t(point.*step));
        s.f64(point.trainingRmse);
        s.f64(point.validationRmse);
    }
    writeSection(payload, tag, s);
}

template <class Step>
std::vector<Step> readCurve(ByteReader& s, Index Step::*step, const std::string& what)
{
    const std::uint32_t count = s.u32((what + " length").c_str());
    s.needItems(count, 20, what.c_str());
    std::vector<Step> curve(count);
    for (Step& point : curve) {
        point.*step = s.u32((what + " step").c_str());
        point.trainingRmse = s.f64((what + " training rmse").c_str());
        point.validationRmse = s.f64((what + " validation rmse").c_str());
    }
    return curve;
}

/// Upper bounds that keep a corrupt file from asking for absurd work.
constexpr std::uint32_t maxDimension = 1U << 20;
constexpr std::uint32_t maxLayers = 1U << 16;

}  // namespace detail

/// The whole model file as bytes.
inline std::vector<unsigned char> encodeModel(const Network& network)
{
    using detail::ByteWriter;
    const Index d = network.inputCount(), m = network.outputCount();
    ByteWriter payload;
    {
        ByteWriter s;
        s.u32(std::uint32_t(d));
        s.u32(std::uint32_t(m));
        s.u32(std::uint32_t(network.layers().size()));
        s.u32(network.stateInput() == StateInput::runningPrediction ? 0 : 1);
        detail::writeSection(payload, "SHAP", s);
    }
    {
        ByteWriter s;
        detail::writeMatrix(s, network.inputScaler().box().lower);
        detail::writeMatrix(s, network.inputScaler().box().upper);
        detail::writeMatrix(s, network.outputScaler().mean());
        detail::writeMatrix(s, network.outputScaler().deviation());
        detail::writeSection(payload, "SCAL", s);
    }
    for (const Layer& layer : network.layers()) {
        ByteWriter s;
        s.u32(std::uint32_t(layer.groups.size()));
        for (const FeatureGroup& group : layer.groups) {
            s.u8(group.kind == FeatureKind::fourier ? 0 : 1);
            s.u8(group.source == FeatureSource::input ? 0 : 1);
            s.u16(0);
            s.u64(std::uint64_t(group.parameters.rows()));
            s.u64(std::uint64_t(group.parameters.cols()));
            detail::writeMatrix(s, group.parameters);
        }
        s.u64(std::uint64_t(layer.amplitudes.rows()));
        detail::writeMatrix(s, layer.amplitudes);
        detail::writeSection(payload, "LAYR", s);
    }
    if (!network.domain().empty()) {
        const TrainingDomain& domain = network.domain();
        ByteWriter s;
        detail::writeMatrix(s, domain.lower());
        detail::writeMatrix(s, domain.upper());
        detail::writeMatrix(s, domain.mean());
        detail::writeMatrix(s, domain.covariance());
        s.f64(domain.shapeLimit());
        detail::writeSection(payload, "DOMN", s);
    }
    const ModelRecord& record = network.record();
    if (!record.inputNames.empty() || !record.outputNames.empty()) {
        ByteWriter s;
        s.u32(std::uint32_t(record.inputNames.size() + record.outputNames.size()));
        for (const auto& name : record.inputNames)
            s.text(name);
        for (const auto& name : record.outputNames)
            s.text(name);
        detail::writeSection(payload, "NAME", s);
    }
    if (!record.heldOutMetrics.empty()) {
        ByteWriter s;
        s.u32(std::uint32_t(record.heldOutMetrics.size()));
        for (const auto& metric : record.heldOutMetrics)
            for (double v : {metric.rmse, metric.relativeRmse, metric.maxAbsError, metric.rSquared, metric.correlation})
                s.f64(v);
        detail::writeSection(payload, "METR", s);
    }
    if (!record.settings.empty()) {
        ByteWriter s;
        s.text(record.settings);
        detail::writeSection(payload, "SETT", s);
    }
    detail::writeCurve(payload, "HIST", record.history, &TrainingStep::layer);
    detail::writeCurve(payload, "TUNH", record.tuningHistory, &TuningStep::epoch);
    if (record.fitSeconds > 0.0) {
        ByteWriter s;
        s.f64(record.fitSeconds);
        detail::writeSection(payload, "TIME", s);
    }
    const KernelTerm& term = network.kernelTerm();
    if (!term.empty()) {
        ByteWriter s;
        s.u64(std::uint64_t(term.centreCount()));
        detail::writeMatrix(s, term.widths);
        detail::writeMatrix(s, term.centres);
        detail::writeMatrix(s, term.weights);
        detail::writeSection(payload, "KERN", s);
    }

    ByteWriter file;
    file.bytes(modelfile::magic, 8);
    file.u32(term.empty() ? modelfile::baseVersion : modelfile::formatVersion);
    file.u32(modelfile::binary64);
    file.u64(payload.buffer().size());
    file.u32(detail::crc32(payload.buffer().data(), payload.buffer().size()));
    file.u32(detail::crc32(file.buffer().data(), file.buffer().size()));
    file.bytes(payload.buffer().data(), payload.buffer().size());
    return std::move(file.buffer());
}

/// Reads a model from bytes (a file's contents, or a model embedded in the
/// host binary). Throws ModelFileError naming the problem and byte offset.
inline Network decodeModel(const unsigned char* data, std::size_t size)
{
    using detail::ByteReader;
    ByteReader header(data, size);
    header.need(modelfile::headerSize, "the 32-byte header");
    if (std::memcmp(data, modelfile::magic, 8) != 0)
        header.fail("not a wavestack model: wrong magic bytes");
    header.section(8, "magic");
    const std::uint32_t version = header.u32("format version");
    const std::uint32_t scalar = header.u32("scalar code");
    const std::uint64_t payloadSize = header.u64("payload length");
    const std::uint32_t payloadCrc = header.u32("payload CRC");
    const std::uint32_t headerCrc = header.u32("header CRC");
    if (detail::crc32(data, 28) != headerCrc)
        throw ModelFileError("header checksum mismatch: the header is damaged", 28);
    if (version == 0 || version > modelfile::formatVersion)
        throw ModelFileError("format version " + std::to_string(version) + " is not supported (this library reads 1 to " +
                                 std::to_string(modelfile::formatVersion) + "); update wavestack",
                             8);
    if (scalar != modelfile::binary64)
        throw ModelFileError("scalar code " + std::to_string(scalar) + " is not supported (8 = binary64)", 12);
    if (payloadSize != header.remaining())
        throw ModelFileError("payload length " + std::to_string(payloadSize) + " but " +
                                 std::to_string(header.remaining()) + " bytes follow the header (truncated or padded)",
                             16);
    if (detail::crc32(data + modelfile::headerSize, std::size_t(payloadSize)) != payloadCrc)
        throw ModelFileError("payload checksum mismatch: the file is damaged", modelfile::headerSize);

    ByteReader payload(data + modelfile::headerSize, std::size_t(payloadSize), modelfile::headerSize);
    std::uint32_t d = 0, m = 0, layerCount = 0, stateCode = 0;
    bool haveShape = false, haveScale = false;
    InputBox box;
    Vector mean, deviation;
    std::vector<Layer> layers;
    TrainingDomain domain;
    ModelRecord record;
    std::vector<std::string> names;
    KernelTerm term;
    std::size_t termOffset = 0;

    while (!payload.atEnd()) {
        const std::size_t tagOffset = payload.offset();
        char tag[5] = {0, 0, 0, 0, 0};
        for (int i = 0; i < 4; ++i)
            tag[i] = static_cast<char>(payload.u8("section tag"));
        const std::uint64_t length = payload.u64("section length");
        if (length > payload.remaining())
            payload.fail(std::string("section '") + tag + "' claims " + std::to_string(length) + " bytes, " +
                         std::to_string(payload.remaining()) + " remain");
        ByteReader s = payload.section(std::size_t(length), tag);
        const std::string name(tag);
        auto requireShape = [&] {
            if (!haveShape)
                throw ModelFileError("section '" + name + "' before the SHAP section", tagOffset);
        };
        if (name == "SHAP") {
            d = s.u32("input count");
            m = s.u32("output count");
            layerCount = s.u32("layer count");
            stateCode = s.u32("state input");
            if (d == 0 || d > detail::maxDimension || m == 0 || m > detail::maxDimension)
                throw ModelFileError("implausible shape: " + std::to_string(d) + " inputs, " + std::to_string(m) +
                                         " outputs",
                                     tagOffset);
            if (layerCount == 0 || layerCount > detail::maxLayers)
                throw ModelFileError("implausible layer count " + std::to_string(layerCount), tagOffset);
            if (stateCode > 1)
                throw ModelFileError("unknown state input code " + std::to_string(stateCode), tagOffset);
            haveShape = true;
        } else if (name == "SCAL") {
            requireShape();
            box.lower = s.finiteVector(d, "input box lower");
            box.upper = s.finiteVector(d, "input box upper");
            mean = s.finiteVector(m, "output mean");
            deviation = s.finiteVector(m, "output deviation");
            if (!(deviation.array() > 0.0).all())
                throw ModelFileError("an output deviation is not positive", tagOffset);
            haveScale = true;
        } else if (name == "LAYR") {
            requireShape();
            if (layers.size() >= layerCount)
                throw ModelFileError("more LAYR sections than the " + std::to_string(layerCount) + " declared",
                                     tagOffset);
            Layer layer;
            const std::uint32_t groups = s.u32("group count");
            s.needItems(groups, 20, "feature groups");
            for (std::uint32_t g = 0; g < groups; ++g) {
                const std::size_t groupOffset = s.offset();
                const std::uint8_t kind = s.u8("feature kind");
                const std::uint8_t source = s.u8("feature source");
                s.u16("reserved");
                if (kind > 1 || source > 1)
                    throw ModelFileError("unknown feature kind " + std::to_string(kind) + " or source " +
                                             std::to_string(source),
                                         groupOffset);
                const std::uint64_t rows = s.u64("parameter rows");
                const std::uint64_t cols = s.u64("parameter columns");
                FeatureGroup group;
                group.kind = kind == 0 ? FeatureKind::fourier : FeatureKind::ridge;
                group.source = source == 0 ? FeatureSource::input : FeatureSource::state;
                const std::uint64_t expected = std::uint64_t(parameterSize(group.kind, source == 0 ? d : m));
                if (cols != expected)
                    throw ModelFileError("a group has " + std::to_string(cols) + " parameters per row, expected " +
                                             std::to_string(expected),
                                         groupOffset);
                group.parameters = s.finiteMatrix(rows, cols, "feature parameters");
                layer.groups.push_back(std::move(group));
            }
            const std::uint64_t amplitudeRows = s.u64("amplitude rows");
            if (amplitudeRows != std::uint64_t(layer.featureCount()))
                s.fail("amplitude rows " + std::to_string(amplitudeRows) + " do not match the " +
                       std::to_string(layer.featureCount()) + " features");
            layer.amplitudes = s.finiteMatrix(amplitudeRows, m, "amplitudes");
            layers.push_back(std::move(layer));
        } else if (name == "DOMN") {
            requireShape();
            Vector lower = s.finiteVector(d, "domain lower");
            Vector upper = s.finiteVector(d, "domain upper");
            Vector centre = s.finiteVector(d, "domain mean");
            Matrix covariance = s.finiteMatrix(d, d, "domain covariance");
            const double limit = s.finite("domain shape limit");
            try {
                domain = TrainingDomain(lower, upper, centre, covariance, limit);
            } catch (const InvalidInput& e) {
                throw ModelFileError(e.what(), tagOffset);
            }
        } else if (name == "NAME") {
            const std::uint32_t count = s.u32("name count");
            s.needItems(count, 4, "names");
            for (std::uint32_t i = 0; i < count; ++i)
                names.push_back(s.text("name"));
        } else if (name == "METR") {
            const std::uint32_t count = s.u32("metric count");
            s.needItems(count, 40, "metrics");
            for (std::uint32_t i = 0; i < count; ++i) {
                ErrorMetrics metric;
                metric.rmse = s.f64("rmse");
                metric.relativeRmse = s.f64("relative rmse");
                metric.maxAbsError = s.f64("max abs error");
                metric.rSquared = s.f64("R^2");
                metric.correlation = s.f64("correlation");
                record.heldOutMetrics.push_back(metric);
            }
        } else if (name == "SETT") {
            record.settings = s.text("settings");
        } else if (name == "HIST") {
            record.history = detail::readCurve(s, &TrainingStep::layer, "history");
        } else if (name == "TUNH") {
            record.tuningHistory = detail::readCurve(s, &TuningStep::epoch, "tuning history");
        } else if (name == "TIME") {
            record.fitSeconds = s.finite("fit time");
        } else if (name == "KERN") {
            requireShape();
            termOffset = tagOffset;
            const std::uint64_t centres = s.u64("kernel centre count");
            if (centres == 0)
                throw ModelFileError("a kernel term with no centres", tagOffset);
            term.widths = s.finiteVector(d, "kernel widths");
            term.centres = s.finiteMatrix(centres, d, "kernel centres");
            term.weights = s.finiteMatrix(centres, m, "kernel weights");
        }
        // Unknown tags: skipped (later minor additions stay readable).
    }
    if (!haveShape || !haveScale)
        payload.fail(std::string("missing required section ") + (haveShape ? "SCAL" : "SHAP"));
    if (layers.size() != layerCount)
        payload.fail(std::to_string(layers.size()) + " LAYR sections, " + std::to_string(layerCount) + " declared");
    if (!names.empty()) {
        if (names.size() != std::size_t(d) + m)
            payload.fail(std::to_string(names.size()) + " names for " + std::to_string(d) + " inputs and " +
                         std::to_string(m) + " outputs");
        record.inputNames.assign(names.begin(), names.begin() + d);
        record.outputNames.assign(names.begin() + d, names.end());
    }
    try {
        Network network(InputScaler(box), OutputScaler(mean, deviation), std::move(layers),
                        stateCode == 0 ? StateInput::runningPrediction : StateInput::residualState);
        if (!domain.empty() && domain.inputCount() != Index(d))
            payload.fail("domain size does not match the inputs");
        network.setDomain(std::move(domain));
        network.setRecord(std::move(record));
        if (!term.empty()) {
            try {
                network.setKernelTerm(std::move(term));
            } catch (const InvalidInput& e) {
                throw ModelFileError(e.what(), termOffset);
            }
        }
        return network;
    } catch (const InvalidInput& e) {
        payload.fail(e.what());
    }
}

inline Network decodeModel(const std::vector<unsigned char>& bytes) { return decodeModel(bytes.data(), bytes.size()); }

/// Writes the model to `path` through a temporary file in the same folder
/// and a rename, so a crash never leaves a half-written model under `path`.
inline void saveModel(const Network& network, const std::string& path)
{
    const std::vector<unsigned char> bytes = encodeModel(network);
    const std::string temporary = path + ".tmp";
    {
        std::ofstream out(temporary, std::ios::binary | std::ios::trunc);
        if (!out)
            throw Error("saveModel: cannot create '" + temporary + "': " + std::strerror(errno));
        out.write(reinterpret_cast<const char*>(bytes.data()), std::streamsize(bytes.size()));
        out.flush();
        if (!out) {
            std::remove(temporary.c_str());
            throw Error("saveModel: writing '" + temporary + "' failed (disk full?)");
        }
    }
    if (std::rename(temporary.c_str(), path.c_str()) != 0) {
        const std::string reason = std::strerror(errno);
        std::remove(temporary.c_str());
        throw Error("saveModel: cannot rename '" + temporary + "' to '" + path + "': " + reason);
    }
}

inline Network loadModel(const std::string& path)
{
    std::ifstream in(path, std::ios::binary);
    if (!in)
        throw Error("loadModel: cannot open '" + path + "': " + std::strerror(errno));
    const std::vector<unsigned char> bytes((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
    try {
        return decodeModel(bytes);
    } catch (const ModelFileError& e) {
        throw ModelFileError(e.problem(), e.offset(), path);
    }
}

}  // namespace wavestack
