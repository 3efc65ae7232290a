#pragma once
/// \file
/// Small static SVG charts for the report page: dots, lines and bars on
/// linear or logarithmic axes, with ticks at 1, 2, 5 x 10^k. The output is
/// well-formed XML and holds no scripts. A point with a non-finite
/// coordinate, or a non-positive one on a log axis, is skipped: such numbers
/// must never reach the SVG text. Styling is left to the page's CSS classes
/// (see report_page.hpp), which keeps each chart small.

#include <algorithm>
#include <cmath>
#include <iterator>
#include <limits>
#include <optional>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include <fmt/format.h>

namespace wavestack::cli::svg {

/// Text made safe for XML/HTML element content and attribute values.
inline std::string escape(std::string_view text)
{
    std::string out;
    out.reserve(text.size());
    for (const char c : text) {
        switch (c) {
        case '&':
            out += "&amp;";
            break;
        case '<':
            out += "&lt;";
            break;
        case '>':
            out += "&gt;";
            break;
        case '"':
            out += "&quot;";
            break;
        case '\'':
            out += "&#39;";
            break;
        default:
            out += c;
        }
    }
    return out;
}

/// A tick label: the shortest %g form, exponents without '+' and leading
/// zeros ("1e-05" -> "1e-5"). `digits` significant digits at most.
inline std::string tickLabel(double value, int digits = 6)
{
    std::string text = fmt::format("{:.{}g}", value, digits);
    const auto e = text.find('e');
    if (e == std::string::npos)
        return text;
    std::string exponent = text.substr(e + 1);
    const bool negative = exponent[0] == '-';
    exponent.erase(0, exponent.find_first_not_of("+-0"));
    return text.substr(0, e) + (negative ? "e-" : "e") + (exponent.empty() ? "0" : exponent);
}

/// About `target` ticks inside [lower, upper], spaced 1, 2 or 5 x 10^k.
inline std::vector<double> linearTicks(double lower, double upper, int target = 5)
{
    std::vector<double> ticks;
    if (!(upper > lower) || !std::isfinite(upper - lower))
        return ticks;
    const double raw = (upper - lower) / target;
    const double magnitude = std::pow(10.0, std::floor(std::log10(raw)));
    const double residual = raw / magnitude;
    const double step = magnitude *
        (residual < 1.5       ? 1.0
             : residual < 3.5 ? 2.0
             : residual < 7.5 ? 5.0
                              : 10.0);
    const double first = std::ceil(lower / step - 1e-9), last = std::floor(upper / step + 1e-9);
    for (double k = first; k <= last; k += 1.0)
        ticks.push_back(std::abs(k) < 0.5 ? 0.0 : k * step);  // exact 0, never -0 or 1e-17
    return ticks;
}

/// Ticks on a log axis: powers of ten (every n-th when there are many
/// decades), or 1, 2, 5 x 10^k (then 1..9 x 10^k) when the range is too
/// short to hold two powers of ten.
inline std::vector<double> logTicks(double lower, double upper)
{
    std::vector<double> ticks;
    if (!(lower > 0.0) || !(upper > lower) || !std::isfinite(upper))
        return ticks;
    const int low = int(std::floor(std::log10(lower))), high = int(std::ceil(std::log10(upper)));
    const auto inside = [&](double v) {
        return v >= lower * (1 - 1e-9) && v <= upper * (1 + 1e-9);
    };
    const int stride = std::max(1, (high - low + 6) / 7);
    for (int k = low; k <= high; ++k)
        if (k % stride == 0 && inside(std::pow(10.0, k)))
            ticks.push_back(std::pow(10.0, k));
    for (const auto& mantissas :
         {std::vector<double>{1, 2, 5}, std::vector<double>{1, 2, 3, 4, 5, 6, 7, 8, 9}}) {
        if (ticks.size() >= 2)
            break;
        ticks.clear();
        for (int k = low; k <= high; ++k)
            for (const double mantissa : mantissas)
                if (inside(mantissa * std::pow(10.0, k)))
                    ticks.push_back(mantissa * std::pow(10.0, k));
    }
    return ticks;
}

/// The span of the values shown on one axis; grows with include().
struct Range {
    double lower = std::numeric_limits<double>::infinity();
    double upper = -std::numeric_limits<double>::infinity();

    /// Finite values only; on a log axis, positive values only.
    void include(double value, bool logarithmic = false)
    {
        if (std::isfinite(value) && (!logarithmic || value > 0.0)) {
            lower = std::min(lower, value);
            upper = std::max(upper, value);
        }
    }
    void include(const std::vector<double>& values, bool logarithmic = false)
    {
        for (const double v : values)
            include(v, logarithmic);
    }
    bool empty() const { return !(upper >= lower); }

    /// Widened by `fraction` of the span on each side so points do not sit on
    /// the frame; a single value or an empty range gets a usable span.
    Range padded(double fraction, bool logarithmic = false) const
    {
        if (empty())
            return logarithmic ? Range{0.1, 1.0} : Range{0.0, 1.0};
        if (logarithmic) {
            const double factor = upper > lower ? std::pow(upper / lower, fraction) : 2.0;
            return {lower / factor, upper * factor};
        }
        const double pad =
            upper > lower ? fraction * (upper - lower) : 0.5 * std::max(1.0, std::abs(lower));
        return {lower - pad, upper + pad};
    }
};

struct Axis {
    std::string label;
    Range range;
    bool logarithmic = false;
    bool integer = false;  ///< ticks at whole numbers only (layers, epochs)
};

/// One chart: a frame with ticks, grid and labels, plus the series added.
class Chart {
public:
    Chart(std::string title, Axis x, Axis y, int width = 380, int height = 270)
        : m_title(std::move(title)),
          m_x(std::move(x)),
          m_y(std::move(y)),
          m_width(width),
          m_height(height)
    {
    }

    /// Round dots, drawn as zero-length path segments with round caps: about
    /// 15 bytes per point instead of 40 for a <circle>.
    void dots(const std::vector<double>& x, const std::vector<double>& y, std::string_view cssClass)
    {
        std::string d;
        for (std::size_t i = 0; i < std::min(x.size(), y.size()); ++i)
            if (const auto p = point(x[i], y[i]))
                fmt::format_to(std::back_inserter(d), "M{:.1f} {:.1f}h0", p->first, p->second);
        addPath(cssClass, d);
    }

    /// A line through the points; it breaks where a point is skipped.
    void line(const std::vector<double>& x, const std::vector<double>& y, std::string_view cssClass)
    {
        std::string d;
        char command = 'M';
        for (std::size_t i = 0; i < std::min(x.size(), y.size()); ++i) {
            if (const auto p = point(x[i], y[i])) {
                fmt::format_to(std::back_inserter(d), "{}{:.1f} {:.1f}", command, p->first,
                               p->second);
                command = 'L';
            } else {
                command = 'M';
            }
        }
        addPath(cssClass, d);
    }

    /// Bars from 0 (linear y axis): bar i spans [edges[i], edges[i + 1]].
    void bars(const std::vector<double>& edges, const std::vector<double>& heights,
              std::string_view cssClass)
    {
        std::string d;
        for (std::size_t i = 0; i + 1 < edges.size() && i < heights.size(); ++i) {
            const auto low = point(edges[i], 0.0), high = point(edges[i + 1], heights[i]);
            if (low && high && heights[i] > 0.0)
                fmt::format_to(std::back_inserter(d), "M{:.1f} {:.1f}H{:.1f}V{:.1f}H{:.1f}Z",
                               low->first, low->second, high->first, high->second, low->first);
        }
        addPath(cssClass, d);
    }

    /// A key in the heading row, right-aligned, outside the plot so it never
    /// hides data: (label, CSS class of its line).
    void legend(std::vector<std::pair<std::string, std::string>> entries)
    {
        m_legend = std::move(entries);
    }

    std::string svg() const
    {
        std::string out;
        auto o = std::back_inserter(out);
        fmt::format_to(o,
                       "<svg xmlns=\"http://www.w3.org/2000/svg\" class=\"chart\" width=\"{0}\" "
                       "height=\"{1}\" viewBox=\"0 0 {0} {1}\" role=\"img\"><title>{2}</title>"
                       "<text class=\"heading\" x=\"{3:.1f}\" y=\"16\">{2}</text>",
                       m_width, m_height, escape(m_title), m_left);
        double right =
            m_width - m_right;  // legend entries from the right, about 6.5 px a character
        for (auto entry = m_legend.rbegin(); entry != m_legend.rend(); ++entry) {
            fmt::format_to(
                o,
                "<path class=\"{}\" d=\"M{:.1f} 12h18\"/><text text-anchor=\"end\" x=\"{:.1f}\" "
                "y=\"16\">{}</text>",
                entry->second, right - 18.0, right - 23.0, escape(entry->first));
            right -= 23.0 + 6.5 * double(entry->first.size()) + 14.0;
        }
        axisTicks(o, m_x, true);
        axisTicks(o, m_y, false);
        fmt::format_to(
            o,
            "<rect class=\"frame\" x=\"{:.1f}\" y=\"{:.1f}\" width=\"{:.1f}\" height=\"{:.1f}\"/>",
            m_left, m_top, plotWidth(), plotHeight());
        out += m_body;
        fmt::format_to(
            o, "<text class=\"label\" text-anchor=\"middle\" x=\"{:.1f}\" y=\"{:.1f}\">{}</text>",
            m_left + 0.5 * plotWidth(), m_height - 6.0, escape(m_x.label));
        fmt::format_to(o,
                       "<text class=\"label\" text-anchor=\"middle\" "
                       "transform=\"translate(14 {:.1f}) rotate(-90)\">{}</text></svg>",
                       m_top + 0.5 * plotHeight(), escape(m_y.label));
        return out;
    }

private:
    void addPath(std::string_view cssClass, const std::string& d)
    {
        if (!d.empty())
            fmt::format_to(std::back_inserter(m_body), "<path class=\"{}\" d=\"{}\"/>",
                           escape(cssClass), d);
    }

    double plotWidth() const { return m_width - m_left - m_right; }
    double plotHeight() const { return m_height - m_top - m_bottom; }

    /// Position along an axis in [0, 1], or nothing for a value that cannot be drawn.
    static std::optional<double> fraction(const Axis& axis, double value)
    {
        const double lo = axis.range.lower, hi = axis.range.upper;
        double f;
        if (axis.logarithmic) {
            if (!(value > 0.0) || !(lo > 0.0))
                return std::nullopt;
            f = std::log(value / lo) / std::log(hi / lo);
        } else {
            f = (value - lo) / (hi - lo);
        }
        // Far outside the frame a value is a caller's bug; keep it out of the SVG all the same.
        if (!std::isfinite(f) || std::abs(f) > 100.0)
            return std::nullopt;
        return f;
    }

    std::optional<std::pair<double, double>> point(double x, double y) const
    {
        const auto fx = fraction(m_x, x), fy = fraction(m_y, y);
        if (!fx || !fy)
            return std::nullopt;
        return std::make_pair(m_left + *fx * plotWidth(), m_top + (1.0 - *fy) * plotHeight());
    }

    /// Tick values with their labels, fewer of them until the labels fit:
    /// side by side on a horizontal axis (digits are about 7 px wide at
    /// 11 px), 24 px apart on a vertical one.
    std::vector<std::pair<double, std::string>> labelledTicks(const Axis& axis,
                                                              bool horizontal) const
    {
        for (int target = horizontal ? 5 : 6;; --target) {
            const auto ticks = axis.logarithmic
                ? logTicks(axis.range.lower, axis.range.upper)
                : linearTicks(axis.range.lower, axis.range.upper, target);
            // Enough digits to tell neighbouring ticks apart on a narrow span of large values.
            int digits = 6;
            if (!axis.logarithmic && ticks.size() >= 2) {
                const double largest = std::max(std::abs(ticks.front()), std::abs(ticks.back()));
                digits = std::clamp(int(std::ceil(std::log10(largest / (ticks[1] - ticks[0])))) + 2,
                                    6, 15);
            }
            std::vector<std::pair<double, std::string>> labelled;
            double width = 0.0;
            for (const double tick : ticks) {
                if (axis.integer && tick != std::round(tick))
                    continue;
                labelled.emplace_back(tick, tickLabel(tick, digits));
                width += horizontal ? 7.0 * double(labelled.back().second.size()) + 12.0 : 24.0;
            }
            if (axis.logarithmic || target <= 2 ||
                width <= (horizontal ? plotWidth() : plotHeight()))
                return labelled;
        }
    }

    template <class Out> void axisTicks(Out o, const Axis& axis, bool horizontal) const
    {
        for (const auto& [tick, label] : labelledTicks(axis, horizontal)) {
            const auto f = fraction(axis, tick);
            if (!f)
                continue;
            if (horizontal) {
                const double x = m_left + *f * plotWidth(), bottom = m_top + plotHeight();
                fmt::format_to(
                    o,
                    "<path class=\"grid\" d=\"M{0:.1f} {1:.1f}V{2:.1f}\"/>"
                    "<path class=\"tick\" d=\"M{0:.1f} {2:.1f}v4\"/>"
                    "<text text-anchor=\"middle\" x=\"{0:.1f}\" y=\"{3:.1f}\">{4}</text>",
                    x, m_top, bottom, bottom + 16.0, label);
            } else {
                const double y = m_top + (1.0 - *f) * plotHeight(), right = m_left + plotWidth();
                fmt::format_to(o,
                               "<path class=\"grid\" d=\"M{0:.1f} {1:.1f}H{2:.1f}\"/>"
                               "<path class=\"tick\" d=\"M{0:.1f} {1:.1f}h-4\"/>"
                               "<text text-anchor=\"end\" x=\"{3:.1f}\" y=\"{4:.1f}\">{5}</text>",
                               m_left, y, right, m_left - 6.0, y + 4.0, label);
            }
        }
    }

    std::string m_title;
    Axis m_x, m_y;
    int m_width, m_height;
    double m_left = 62.0, m_right = 14.0, m_top = 26.0, m_bottom = 42.0;
    std::string m_body;
    std::vector<std::pair<std::string, std::string>> m_legend;
};

}  // namespace wavestack::cli::svg
