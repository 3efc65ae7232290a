#pragma once
/// \file
/// The visual report of a model checked against a data file: one
/// self-contained page (inline CSS and SVG, no scripts, no external
/// resources) that is both HTML5 and well-formed XML, so XML tools can read
/// it as well as browsers.
///
/// Sections, in order: title, files and the validity notice; summary tables
/// (inputs with their training domain, architecture, errors per output on
/// this data beside the held-out errors stored at fit time, rows outside the
/// training box); per output a predicted-vs-true scatter and an error
/// histogram; the training curve per layer and, when the model was tuned,
/// per Adam epoch; 1-D slices through the centre of the training domain.
///
/// Slices get one chart per (output, input) pair, grouped by output:
/// outputs usually differ in scale, and one y axis per chart keeps each
/// legible. A report therefore holds 2 m + (history ? 1 : 0) +
/// (tuning history ? 1 : 0) + d m SVG elements for d inputs and m outputs.

#include <algorithm>
#include <cmath>
#include <iterator>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include <fmt/format.h>

#include "svg_chart.hpp"
#include "wavestack/check/metrics.hpp"
#include "wavestack/core/error.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/model/network.hpp"

namespace wavestack::cli {

struct ReportData {
    std::string modelPath;  ///< shown in the page
    std::string dataPath;   ///< shown in the page
    Matrix inputs;          ///< N x d, user units, columns in the model's input order
    Matrix reference;       ///< N x m true values from the data file
    Matrix predicted;       ///< N x m model predictions
};

namespace detail {

/// At most this many points per scatter plot keep the page small and quick to draw.
constexpr Index reportScatterPoints = 4000;
constexpr int reportHistogramBins = 40;
constexpr Index reportSlicePoints = 200;

inline std::vector<std::string> reportNames(const std::vector<std::string>& stored, Index count,
                                            char prefix)
{
    if (Index(stored.size()) == count)
        return stored;
    std::vector<std::string> names;
    for (Index j = 0; j < count; ++j)
        names.push_back(fmt::format("{}{}", prefix, j));
    return names;
}

/// A number for a table cell, to 4 significant digits, in plain notation
/// where engineers read it fastest (50000, not 5e+04); "n/a" for the
/// infinities and NaNs the metrics use to say "undefined".
inline std::string reportNumber(double value)
{
    if (!std::isfinite(value))
        return "n/a";
    const double magnitude = std::abs(value);
    if (magnitude == 0.0 || (magnitude >= 1e-3 && magnitude < 1e7)) {
        const int decimals =
            magnitude == 0.0 ? 0 : std::max(0, 3 - int(std::floor(std::log10(magnitude))));
        return fmt::format("{:.{}f}", value, decimals);
    }
    return svg::tickLabel(value, 4);
}

/// R^2 and correlation: fixed decimals, since their distance from 1 is what matters.
inline std::string reportUnitNumber(double value)
{
    return std::isfinite(value) ? fmt::format("{:.5f}", value) : "n/a";
}

inline std::vector<double> reportColumn(const Matrix& matrix, Index column,
                                        const std::vector<Index>& rows)
{
    std::vector<double> values;
    values.reserve(rows.size());
    for (const Index i : rows)
        values.push_back(matrix(i, column));
    return values;
}

/// Every row, or an even stride of `limit` rows: deterministic, and it keeps
/// the data's own ordering and spread.
inline std::vector<Index> reportSample(Index rows, Index limit)
{
    std::vector<Index> sample;
    const Index count = std::min(rows, limit);
    for (Index k = 0; k < count; ++k)
        sample.push_back(rows <= limit ? k : Index(double(k) * double(rows) / double(count)));
    return sample;
}

constexpr std::string_view reportStyle =
    "body{margin:0;background:#fff;color:#1f2630;font:14px/1.45 'DejaVu Sans',Arial,sans-serif}"
    "main{max-width:1180px;margin:0 auto;padding:22px 28px 36px}"
    "h1{font-size:22px;margin:0 0 4px}"
    "h2{font-size:17px;margin:26px 0 8px;padding-bottom:3px;border-bottom:1px solid #d3d9df}"
    "h3{font-size:14px;margin:14px 0 6px}"
    "p{margin:6px 0}"
    ".files{color:#4b5663}"
    "code{font:13px 'DejaVu Sans Mono',monospace;background:#f2f4f6;"
    "padding:1px 4px;border-radius:3px}"
    ".notice{margin:12px 0;padding:10px 14px;border:1px solid #d8a23a;border-left-width:5px;"
    "background:#fff8e8;border-radius:3px}"
    ".tables{display:flex;flex-wrap:wrap;gap:8px 36px;align-items:flex-start}"
    "table{border-collapse:collapse;font-size:13px;font-variant-numeric:tabular-nums;"
    "margin:4px 0 8px}"
    "caption{text-align:left;font-weight:bold;padding:2px 0 4px}"
    "th,td{padding:3px 10px;border-bottom:1px solid #e4e8ec;text-align:right}"
    "th:first-child,td:first-child{text-align:left}"
    "thead th{background:#f2f4f6;font-weight:600}"
    "td.group,th.group{text-align:center;color:#4b5663}"
    ".figures{display:flex;flex-wrap:wrap;gap:10px 14px}"
    "figure{margin:0}"
    "figcaption{font-size:12px;color:#5b6672;padding-left:62px}"
    ".muted{color:#5b6672}"
    "svg.chart{background:#fff}"
    "svg text{font-size:11px;fill:#39424d}"
    "svg text.heading{font-size:12px;font-weight:600;fill:#1f2630}"
    "svg text.label{font-size:12px}"
    "svg .frame{fill:none;stroke:#9aa4ae}"
    "svg .grid{stroke:#edf0f3}"
    "svg .tick{stroke:#9aa4ae}"
    "svg .dots{fill:none;stroke:#2f6db3;stroke-width:2.6;stroke-linecap:round;stroke-opacity:0.75}"
    "svg .diagonal{fill:none;stroke:#c0392b;stroke-width:1.2;stroke-dasharray:5 3}"
    "svg .bars{fill:#7fa7d4;stroke:#3f6f9f;stroke-width:0.6}"
    "svg .zero{fill:none;stroke:#c0392b;stroke-width:1.2;stroke-dasharray:4 3}"
    "svg .train{fill:none;stroke:#2f6db3;stroke-width:1.8}"
    "svg .valid{fill:none;stroke:#d9822b;stroke-width:1.8;stroke-dasharray:6 3}"
    "svg .train-dots{fill:none;stroke:#2f6db3;stroke-width:5;stroke-linecap:round}"
    "svg .valid-dots{fill:none;stroke:#d9822b;stroke-width:5;stroke-linecap:round}"
    "svg .slice{fill:none;stroke:#2f6db3;stroke-width:1.8}"
    "svg .centre{fill:none;stroke:#9aa4ae;stroke-dasharray:3 3}";

template <class Out>
void reportFigure(Out out, const svg::Chart& chart, std::string_view caption = {})
{
    fmt::format_to(out, "<figure>{}", chart.svg());
    if (!caption.empty())
        fmt::format_to(out, "<figcaption>{}</figcaption>", svg::escape(caption));
    fmt::format_to(out, "</figure>");
}

template <class Out>
void reportSummary(Out out, const Network& network, const ReportData& data,
                   const std::vector<std::string>& inputs, const std::vector<std::string>& outputs)
{
    const TrainingDomain& domain = network.domain();
    const ModelRecord& record = network.record();
    const Index rows = data.inputs.rows();

    fmt::format_to(out, "<h2>Summary</h2><div class=\"tables\">");
    fmt::format_to(out,
                   "<table><caption>Inputs</caption><thead><tr><th>input</th><th>training min</th>"
                   "<th>training max</th><th>data min</th><th>data max</th></tr></thead><tbody>");
    for (Index j = 0; j < Index(inputs.size()); ++j) {
        fmt::format_to(out, "<tr><td>{}</td>", svg::escape(inputs[j]));
        if (domain.empty())
            fmt::format_to(out, "<td>-</td><td>-</td>");
        else
            fmt::format_to(out, "<td>{}</td><td>{}</td>", reportNumber(domain.lower()[j]),
                           reportNumber(domain.upper()[j]));
        if (rows > 0)
            fmt::format_to(out, "<td>{}</td><td>{}</td></tr>",
                           reportNumber(data.inputs.col(j).minCoeff()),
                           reportNumber(data.inputs.col(j).maxCoeff()));
        else
            fmt::format_to(out, "<td>-</td><td>-</td></tr>");
    }
    fmt::format_to(out, "</tbody></table>");

    Index parameters = 0;
    for (const Layer& layer : network.layers()) {
        for (const FeatureGroup& group : layer.groups)
            parameters += group.parameters.size();
        parameters += layer.amplitudes.size();
    }
    fmt::format_to(out,
                   "<table><caption>Model</caption><tbody>"
                   "<tr><td>inputs / outputs</td><td>{} / {}</td></tr>"
                   "<tr><td>residual layers</td><td>{}</td></tr>"
                   "<tr><td>total width (parameter rows)</td><td>{}</td></tr>"
                   "<tr><td>trainable parameters</td><td>{}</td></tr>",
                   network.inputCount(), network.outputCount(), network.residualLayerCount(),
                   network.width(), parameters);
    if (record.fitSeconds > 0.0)
        fmt::format_to(out, "<tr><td>fit time</td><td>{:.3g} s</td></tr>", record.fitSeconds);
    fmt::format_to(out, "<tr><td>rows in this data</td><td>{}</td></tr></tbody></table></div>",
                   rows);

    if (domain.empty()) {
        fmt::format_to(
            out,
            "<p><strong>No training domain is stored with this model</strong> (it was built "
            "by hand), so nothing here tells where it is valid.</p>");
    } else {
        Index outside = 0;
        Vector row(data.inputs.cols());
        for (Index i = 0; i < rows; ++i) {
            row = data.inputs.row(i).transpose();  // outsideBox reads a contiguous array
            outside += domain.outsideBox(row.data()) ? 1 : 0;
        }
        fmt::format_to(
            out,
            "<p><strong>{} of {} rows</strong> of this data lie outside the training box{}</p>",
            outside, rows,
            outside > 0 ? "; the model extrapolates there and the errors below include them."
                        : ", so every prediction below is an interpolation.");
    }

    // Errors on this data beside those measured on the held-out rows at fit time.
    std::vector<ErrorMetrics> here;
    std::string failure;
    try {
        if (rows > 0)
            here = measureColumnErrors(data.predicted, data.reference);
    } catch (const Error& error) {
        failure = error.what();
    }
    const auto& heldOut = record.heldOutMetrics;
    const bool withHeldOut = heldOut.size() == outputs.size();
    fmt::format_to(out,
                   "<table><caption>Errors per output</caption><thead><tr><th></th>"
                   "<th class=\"group\" colspan=\"4\">on this data</th>{}</tr><tr><th>output</th>",
                   withHeldOut ? "<th class=\"group\" colspan=\"4\">held out at fit time</th>"
                               : "");
    for (int copy = 0; copy < (withHeldOut ? 2 : 1); ++copy)
        fmt::format_to(
            out, "<th>relative RMSE</th><th>max |error|</th><th>R&#178;</th><th>correlation</th>");
    fmt::format_to(out, "</tr></thead><tbody>");
    const auto cells = [&](const ErrorMetrics& m) {
        fmt::format_to(out, "<td>{}</td><td>{}</td><td>{}</td><td>{}</td>",
                       reportNumber(m.relativeRmse), reportNumber(m.maxAbsError),
                       reportUnitNumber(m.rSquared), reportUnitNumber(m.correlation));
    };
    for (std::size_t o = 0; o < outputs.size(); ++o) {
        fmt::format_to(out, "<tr><td>{}</td>", svg::escape(outputs[o]));
        if (o < here.size())
            cells(here[o]);
        else
            fmt::format_to(out, "<td class=\"group\" colspan=\"4\">not available</td>");
        if (withHeldOut)
            cells(heldOut[o]);
        fmt::format_to(out, "</tr>");
    }
    fmt::format_to(out, "</tbody></table>");
    if (!failure.empty())
        fmt::format_to(out, "<p class=\"muted\">Errors on this data could not be measured: {}</p>",
                       svg::escape(failure));
    if (!withHeldOut)
        fmt::format_to(out,
                       "<p class=\"muted\">No held-out errors are stored with this model.</p>");
    fmt::format_to(
        out,
        "<p class=\"muted\">Relative RMSE is the RMSE divided by the standard deviation of the "
        "true values; R&#178; = 1 - SSE / SST.</p>");
}

template <class Out>
void reportAccuracy(Out out, const ReportData& data, const std::vector<std::string>& outputs)
{
    const Index rows = data.reference.rows();
    const std::vector<Index> sample = reportSample(rows, reportScatterPoints);
    fmt::format_to(out, "<h2>Predictions against the data</h2>");
    for (Index o = 0; o < Index(outputs.size()); ++o) {
        const std::string& name = outputs[o];
        fmt::format_to(out, "<h3>{}</h3><div class=\"figures\">", svg::escape(name));

        const std::vector<double> truth = reportColumn(data.reference, o, sample),
                                  predicted = reportColumn(data.predicted, o, sample);
        svg::Range both;
        both.include(truth);
        both.include(predicted);
        both = both.padded(0.04);
        svg::Chart scatter("Predicted vs true: " + name, {"true " + name, both},
                           {"predicted " + name, both});
        scatter.dots(truth, predicted, "dots");
        // The reference line goes on top, so dense dots cannot hide it.
        scatter.line({both.lower, both.upper}, {both.lower, both.upper}, "diagonal");
        const std::string shown = Index(sample.size()) < rows
            ? fmt::format("{} of {} rows shown (even stride); dashed: y = x", sample.size(), rows)
            : fmt::format("{} rows; dashed: y = x", rows);
        reportFigure(out, scatter, shown);

        std::vector<double> errors;
        for (Index i = 0; i < rows; ++i)
            errors.push_back(data.predicted(i, o) - data.reference(i, o));
        svg::Range span;
        span.include(errors);
        if (span.empty() || span.upper == span.lower)
            span = span.padded(0.0);
        std::vector<double> edges(reportHistogramBins + 1), counts(reportHistogramBins, 0.0);
        const double binWidth = (span.upper - span.lower) / reportHistogramBins;
        for (int b = 0; b <= reportHistogramBins; ++b)
            edges[b] = span.lower + b * binWidth;
        for (const double e : errors)
            if (std::isfinite(e))
                counts[std::min(reportHistogramBins - 1, int((e - span.lower) / binWidth))] += 1.0;
        svg::Range height;
        height.include(0.0);
        height.include(*std::max_element(counts.begin(), counts.end()));
        svg::Chart histogram("Error histogram: " + name,
                             {"predicted - true", {span.lower - binWidth, span.upper + binWidth}},
                             {"rows", {0.0, height.padded(0.05).upper}});
        histogram.bars(edges, counts, "bars");
        if (span.lower <= 0.0 && span.upper >= 0.0)
            histogram.line({0.0, 0.0}, {0.0, height.upper}, "zero");
        reportFigure(out, histogram,
                     fmt::format("{} bins of width {}; dashed: zero error", reportHistogramBins,
                                 svg::tickLabel(binWidth, 3)));
        fmt::format_to(out, "</div>");
    }
}

/// The training and validation RMSE of a curve on a log axis; values <= 0
/// (validation -1 = no split; an exact fit) are left out, as a log axis cannot show them.
template <class Out, class Step>
void reportCurve(Out out, const std::vector<Step>& steps, std::string title, std::string xLabel,
                 Index Step::*position)
{
    std::vector<double> x, training, validation;
    for (const Step& step : steps) {
        x.push_back(double(step.*position));
        training.push_back(step.trainingRmse);
        validation.push_back(step.validationRmse);
    }
    svg::Range xs, ys;
    xs.include(x);
    ys.include(training, true);
    ys.include(validation, true);
    svg::Chart chart(std::move(title), {std::move(xLabel), xs.padded(0.04), false, true},
                     {"RMSE (standardised)", ys.padded(0.06, true), true}, 460, 290);
    std::vector<std::pair<std::string, std::string>> legend{{"training", "train"}};
    chart.line(x, training, "train");
    if (steps.size() < 30)
        chart.dots(x, training, "train-dots");
    if (std::any_of(validation.begin(), validation.end(), [](double v) { return v > 0.0; })) {
        chart.line(x, validation, "valid");
        if (steps.size() < 30)
            chart.dots(x, validation, "valid-dots");
        legend.emplace_back("validation", "valid");
    }
    chart.legend(std::move(legend));
    reportFigure(out, chart);
}

template <class Out> void reportTraining(Out out, const ModelRecord& record)
{
    fmt::format_to(out, "<h2>Training curve</h2>");
    if (record.history.empty()) {
        fmt::format_to(out, "<p class=\"muted\">No training curve stored with this model.</p>");
        return;
    }
    fmt::format_to(out, "<div class=\"figures\">");
    reportCurve(out, record.history, "RMSE per layer", "layer", &TrainingStep::layer);
    if (!record.tuningHistory.empty())
        reportCurve(out, record.tuningHistory, "RMSE per Adam epoch", "epoch", &TuningStep::epoch);
    fmt::format_to(
        out,
        "</div><p class=\"muted\">Errors in standardised output units (divided by each output's "
        "standard deviation in the training data); layer 0 is the initial layer.</p>");
}

template <class Out>
void reportSlices(Out out, const Network& network, const ReportData& data,
                  const std::vector<std::string>& inputs, const std::vector<std::string>& outputs)
{
    const Index d = network.inputCount();
    const TrainingDomain& domain = network.domain();
    Vector lower(d), upper(d);
    if (!domain.empty()) {
        lower = domain.lower();
        upper = domain.upper();
    } else if (data.inputs.rows() > 0) {
        lower = data.inputs.colwise().minCoeff().transpose();
        upper = data.inputs.colwise().maxCoeff().transpose();
    } else {
        lower = network.inputScaler().box().lower;  // the box the scaler maps onto [-1, 1]
        upper = network.inputScaler().box().upper;
    }
    const Vector centre = 0.5 * (lower + upper);

    fmt::format_to(
        out,
        "<h2>Slices through the centre of the {}</h2><p>Each chart varies one input over its range "
        "with the others held at the centre:",
        domain.empty() ? "data's input range" : "training domain");
    for (Index j = 0; j < d; ++j)
        fmt::format_to(out, "{} {} = {}", j == 0 ? "" : ",", svg::escape(inputs[j]),
                       reportNumber(centre[j]));
    fmt::format_to(out, ".</p>");

    std::vector<Matrix> values;  // per input: reportSlicePoints x m
    std::vector<std::vector<double>> positions;
    for (Index j = 0; j < d; ++j) {
        Matrix points = centre.transpose().replicate(reportSlicePoints, 1);
        std::vector<double> x;
        for (Index k = 0; k < reportSlicePoints; ++k) {
            points(k, j) =
                lower[j] + (upper[j] - lower[j]) * double(k) / double(reportSlicePoints - 1);
            x.push_back(points(k, j));
        }
        values.push_back(network.evaluateBatch(points));
        positions.push_back(std::move(x));
    }
    for (Index o = 0; o < Index(outputs.size()); ++o) {
        fmt::format_to(out, "<h3>{}</h3><div class=\"figures\">", svg::escape(outputs[o]));
        for (Index j = 0; j < d; ++j) {
            const Vector column = values[j].col(o);
            const std::vector<double> y(column.data(), column.data() + column.size());
            svg::Range xs, ys;
            xs.include(positions[j]);
            ys.include(y);
            xs = xs.upper > xs.lower ? xs : xs.padded(0.0);
            ys = ys.padded(0.06);
            svg::Chart chart(outputs[o] + " along " + inputs[j], {inputs[j], xs}, {outputs[o], ys},
                             280, 220);
            chart.line({centre[j], centre[j]}, {ys.lower, ys.upper}, "centre");
            chart.line(positions[j], y, "slice");
            reportFigure(out, chart);
        }
        fmt::format_to(out, "</div>");
    }
    fmt::format_to(out, "<p class=\"muted\">Dotted: the centre value of the varied input.</p>");
}

}  // namespace detail

/// One self-contained HTML page (inline SVG + inline CSS, no scripts, no
/// external resources). Throws InvalidInput when the data's shapes do not
/// match the network.
inline std::string renderReport(const Network& network, const ReportData& data)
{
    const Index d = network.inputCount(), m = network.outputCount(), rows = data.inputs.rows();
    if (data.inputs.cols() != d || data.reference.cols() != m || data.predicted.cols() != m ||
        data.reference.rows() != rows || data.predicted.rows() != rows)
        throw InvalidInput(
            fmt::format("renderReport: the network has {} inputs and {} outputs, but the data is "
                        "{} x {} inputs, {} x {} reference and {} x {} predicted values",
                        d, m, rows, data.inputs.cols(), data.reference.rows(),
                        data.reference.cols(), data.predicted.rows(), data.predicted.cols()));
    const ModelRecord& record = network.record();
    const auto inputs = detail::reportNames(record.inputNames, d, 'x');
    const auto outputs = detail::reportNames(record.outputNames, m, 'y');

    std::string page;
    auto out = std::back_inserter(page);
    fmt::format_to(
        out,
        "<!DOCTYPE html>\n<html xmlns=\"http://www.w3.org/1999/xhtml\" lang=\"en\" xml:lang=\"en\">"
        "<head><meta charset=\"utf-8\"/>"
        "<title>wavestack report: {0}</title><style>{1}</style></head>\n"
        "<body><main><h1>Surrogate model report</h1>"
        "<p class=\"files\">Model <code>{0}</code> checked against data <code>{2}</code></p>"
        "<div class=\"notice\"><strong>Valid only inside its training domain.</strong> "
        "This model is an approximation fitted to sampled data. Its predictions can be trusted "
        "only inside the training domain (the box of input ranges in the summary below); "
        "outside that box they are extrapolation and may be far off. Design decisions defer to "
        "the applicable codes and to licensed engineering practice, not to this report.</div>\n",
        svg::escape(data.modelPath), detail::reportStyle, svg::escape(data.dataPath));
    detail::reportSummary(out, network, data, inputs, outputs);
    page += '\n';
    detail::reportAccuracy(out, data, outputs);
    page += '\n';
    detail::reportTraining(out, record);
    page += '\n';
    detail::reportSlices(out, network, data, inputs, outputs);
    page += "\n</main></body></html>\n";
    return page;
}

}  // namespace wavestack::cli
