// Tests of the visual report page (tools/cli/report_page.hpp) and its SVG charts.
#include "doctest/doctest.h"

#include <report_page.hpp>

#include <cmath>
#include <regex>
#include <string>
#include <vector>

#include <fmt/format.h>

#include <wavestack/check/test_functions.hpp>
#include <wavestack/core/random.hpp>
#include <wavestack/train/fit.hpp>

using namespace wavestack;
using cli::renderReport;
using cli::ReportData;

namespace {

void checkNear(const std::vector<double>& actual, const std::vector<double>& expected)
{
    REQUIRE(actual.size() == expected.size());
    for (std::size_t i = 0; i < actual.size(); ++i)
        CHECK(actual[i] == doctest::Approx(expected[i]).epsilon(1e-12));
}

std::size_t countOf(const std::string& text, const std::string& part)
{
    std::size_t count = 0;
    for (auto at = text.find(part); at != std::string::npos; at = text.find(part, at + 1))
        ++count;
    return count;
}

/// Every <svg ...> ... </svg> element, in order.
std::vector<std::string> svgElements(const std::string& page)
{
    std::vector<std::string> elements;
    for (auto at = page.find("<svg"); at != std::string::npos; at = page.find("<svg", at + 1)) {
        const auto end = page.find("</svg>", at);
        if (end == std::string::npos)
            break;
        elements.push_back(page.substr(at, end + 6 - at));
    }
    return elements;
}

/// Ishigami (Ishigami & Homma 1990) and a smooth second output cos(x1) x3 on
/// [-pi, pi]^3, as two columns of one data set.
struct TwoOutputs {
    Matrix inputs, outputs;
};

TwoOutputs ishigamiPair(Index n, std::uint64_t seed)
{
    const auto domain = test_functions::ishigamiDomain();
    Random random(seed);
    TwoOutputs data{Matrix(n, 3), Matrix(n, 2)};
    for (Index i = 0; i < n; ++i) {
        double x[3];
        for (int j = 0; j < 3; ++j) {
            x[j] = domain.lower[j] + (domain.upper[j] - domain.lower[j]) * random.uniform();
            data.inputs(i, j) = x[j];
        }
        data.outputs(i, 0) = test_functions::ishigami(x);
        data.outputs(i, 1) = std::cos(x[0]) * x[2];
    }
    return data;
}

void checkWellFormed(const std::string& page)
{
    CHECK(page.rfind("<!DOCTYPE html>", 0) == 0);
    CHECK(page.find("<html xmlns=\"http://www.w3.org/1999/xhtml\"") != std::string::npos);
    CHECK(page.find("<meta charset=\"utf-8\"/>") != std::string::npos);
    CHECK(countOf(page, "<svg") == countOf(page, "</svg>"));
    CHECK(countOf(page, "<svg") == countOf(page, "<svg xmlns=\"http://www.w3.org/2000/svg\""));
    CHECK(countOf(page, "<table") == countOf(page, "</table>"));
    CHECK(countOf(page, "<figure>") == countOf(page, "</figure>"));
    CHECK(countOf(page, "<div") == countOf(page, "</div>"));
    CHECK(page.find("<script") == std::string::npos);
    CHECK(page.find("href=") == std::string::npos);  // no external resources
    CHECK(page.find("src=") == std::string::npos);
    // Every '&' starts an entity: raw ampersands would break XML parsing.
    const std::regex bareAmpersand("&(?!(amp|lt|gt|quot|#[0-9]+);)");
    CHECK_FALSE(std::regex_search(page, bareAmpersand));
    for (const std::string& svg : svgElements(page)) {
        CHECK(svg.find("<title>") != std::string::npos);
        CHECK(svg.find("viewBox=\"") != std::string::npos);
        CHECK(svg.find("width=\"") != std::string::npos);
        // No word of the charts' own text contains these, so any hit is a number gone wrong.
        CHECK_FALSE(std::regex_search(svg, std::regex("nan|inf", std::regex::icase)));
    }
}

}  // namespace

TEST_CASE("the report of a fitted two-output model holds every section, escaped and well-formed")
{
    const TwoOutputs data = ishigamiPair(500, 11);
    FitOptions options;
    options.width = 64;
    options.layers = 2;
    options.validationFraction = 0.2;
    options.tune.epochs = 3;
    options.inputNames = {"a<b&c", "x\"2'", "x3"};
    options.outputNames = {"ishigami>1", "cos&x3"};
    const Network network = fit(data.inputs, data.outputs, options);
    REQUIRE(!network.record().history.empty());
    REQUIRE(!network.record().tuningHistory.empty());

    // Check on fresh points, at least two of them outside the training box.
    TwoOutputs check = ishigamiPair(300, 12);
    check.inputs(0, 0) = 5.0;
    check.inputs(1, 2) = -4.0;
    ReportData report{"models/m<1>.wsm", "data/check&test.csv", check.inputs, check.outputs,
                      network.evaluateBatch(check.inputs)};
    const std::string page = renderReport(network, report);

    checkWellFormed(page);
    // d = 3 inputs, m = 2 outputs: 2 m (scatter, histogram) + 2 curves (layers, Adam epochs) + d m
    // slices.
    CHECK(countOf(page, "<svg") == 2 * 2 + 2 + 3 * 2);

    CHECK(page.find("a&lt;b&amp;c") != std::string::npos);
    CHECK(page.find("x&quot;2&#39;") != std::string::npos);
    CHECK(page.find("ishigami&gt;1") != std::string::npos);
    CHECK(page.find("cos&amp;x3") != std::string::npos);
    CHECK(page.find("models/m&lt;1&gt;.wsm") != std::string::npos);
    CHECK(page.find("data/check&amp;test.csv") != std::string::npos);
    for (const char* raw : {"a<b&c", "x\"2'", "ishigami>1", "cos&x3", "m<1>", "check&test"})
        CHECK(page.find(raw) == std::string::npos);

    CHECK(page.find("Valid only inside its training domain.") != std::string::npos);
    CHECK(page.find("extrapolation") != std::string::npos);
    CHECK(page.find("licensed engineering practice") != std::string::npos);
    // Fresh points may also fall just outside the box of the training sample.
    const Vector low = data.inputs.colwise().minCoeff(), high = data.inputs.colwise().maxCoeff();
    int outside = 0;
    for (Index i = 0; i < check.inputs.rows(); ++i)
        outside += ((check.inputs.row(i).transpose().array() < low.array()) ||
                    (check.inputs.row(i).transpose().array() > high.array()))
                       .any();
    CHECK(outside >= 2);
    CHECK(page.find(fmt::format(
              "<strong>{} of 300 rows</strong> of this data lie outside the training box",
              outside)) != std::string::npos);
    CHECK(page.find("held out at fit time") != std::string::npos);
    CHECK(page.find("RMSE per Adam epoch") != std::string::npos);
    CHECK(page.find("No training curve stored") == std::string::npos);
}

TEST_CASE("scatter plots keep at most 4000 points")
{
    const TwoOutputs data = ishigamiPair(9000, 3);
    FitOptions options;
    options.width = 32;
    const Network network = fit(data.inputs, data.outputs, options);
    const std::string page = renderReport(
        network,
        ReportData{"m", "d", data.inputs, data.outputs, network.evaluateBatch(data.inputs)});
    checkWellFormed(page);
    CHECK(page.find("4000 of 9000 rows shown") != std::string::npos);
    const auto svgs = svgElements(page);
    REQUIRE(svgs.size() >= 1);
    CHECK(countOf(svgs[0], "h0") == 4000);  // one zero-length segment per dot
}

TEST_CASE("a hand-built network without domain or record still renders")
{
    // One input on [0, 2], one frequency, two outputs (as in network_test.cpp).
    Vector lower(1), upper(1), mean(2), deviation(2);
    lower << 0.0;
    upper << 2.0;
    mean << 1.0, -1.0;
    deviation << 2.0, 0.5;
    Matrix w(1, 1), b(2, 2);
    w << 2.0;
    b << 0.5, 0.1, 0.25, -0.3;
    const Network network(InputScaler(InputBox{lower, upper}), OutputScaler(mean, deviation),
                          Layer{{FeatureGroup{FeatureKind::fourier, w}}, b});
    Matrix x(50, 1);
    for (Index i = 0; i < 50; ++i)
        x(i, 0) = 2.0 * i / 49.0;
    Matrix truth = network.evaluateBatch(x);
    truth.col(1).setConstant(
        3.0);  // a constant reference column: R^2 and correlation are undefined

    const std::string page =
        renderReport(network, ReportData{"hand.wsm", "x.csv", x, truth, network.evaluateBatch(x)});
    checkWellFormed(page);
    // No history: 2 m charts + d m slices, with the default names.
    CHECK(countOf(page, "<svg") == 2 * 2 + 1 * 2);
    CHECK(page.find("No training curve stored") != std::string::npos);
    CHECK(page.find("No training domain is stored") != std::string::npos);
    CHECK(page.find("No held-out errors are stored") != std::string::npos);
    CHECK(page.find(">x0<") != std::string::npos);
    CHECK(page.find(">y1<") != std::string::npos);
    CHECK(page.find("n/a") != std::string::npos);
    CHECK(page.find("fit time") == std::string::npos);

    // Mismatched shapes are the caller's error.
    CHECK_THROWS_AS(renderReport(network, ReportData{"m", "d", Matrix(3, 2), truth, truth}),
                    InvalidInput);
}

TEST_CASE("non-finite values never reach the SVG")
{
    Vector lower(1), upper(1), mean(1), deviation(1);
    lower << 0.0;
    upper << 1.0;
    mean << 0.0;
    deviation << 1.0;
    Matrix w(1, 1), b(2, 1);
    w << 1.0;
    b << 1.0, 0.0;
    const Network network(InputScaler(InputBox{lower, upper}), OutputScaler(mean, deviation),
                          Layer{{FeatureGroup{FeatureKind::fourier, w}}, b});
    Matrix x(4, 1), truth(4, 1), predicted(4, 1);
    x << 0.0, 0.5, 1.0, 0.25;
    truth << 1.0, std::nan(""), 2.0, INFINITY;
    predicted << 1.0, 2.0, -INFINITY, 3.0;
    const std::string page = renderReport(network, ReportData{"m", "d", x, truth, predicted});
    checkWellFormed(page);
    CHECK(page.find("could not be measured") != std::string::npos);
}

TEST_CASE("ticks are 1, 2 or 5 x 10^k and labels are short")
{
    using cli::svg::linearTicks;
    using cli::svg::logTicks;
    using cli::svg::tickLabel;
    checkNear(linearTicks(0.0, 1.0), {0.0, 0.2, 0.4, 0.6, 0.8, 1.0});
    CHECK(linearTicks(-3.3, 3.3, 5).size() == 7);  // step 1: -3 .. 3
    const auto wide = linearTicks(63070.0, 115600.0);
    CHECK(wide.front() == 70000.0);
    CHECK(wide[1] - wide[0] == 10000.0);
    CHECK(linearTicks(1.0, 1.0).empty());
    checkNear(logTicks(1e-4, 1.0), {1e-4, 1e-3, 1e-2, 1e-1, 1.0});
    checkNear(logTicks(0.02, 0.07), {0.02, 0.05});
    checkNear(logTicks(1e-12, 1.0),
              {1e-12, 1e-10, 1e-8, 1e-6, 1e-4, 1e-2, 1.0});  // every other decade
    CHECK(logTicks(0.0, 1.0).empty());
    CHECK(tickLabel(0.6000000000000001) == "0.6");
    CHECK(tickLabel(1e-5) == "1e-5");
    CHECK(tickLabel(2e6) == "2e6");
    CHECK(tickLabel(115600.0) == "115600");
    CHECK(cli::svg::escape("a<b&c>\"'") == "a&lt;b&amp;c&gt;&quot;&#39;");
}
