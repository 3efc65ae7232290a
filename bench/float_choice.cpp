// Which of the accuracy suite's models FloatNetwork keeps in float, and what
// plain float evaluation would cost them (model/float_network.hpp). Fits each
// case with autoFit (fit seed 7, 2 threads) on the suite's data and writes a
// Markdown table:
//
//   ./build/bench/float_choice bench/results/float_choice.md [sizes, default 1000,10000]

#include <algorithm>
#include <cstdio>
#include <cstdlib>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include <wavestack/check/metrics.hpp>
#include <wavestack/model/float_network.hpp>
#include <wavestack/train/auto_fit.hpp>

#include "suite_cases.hpp"

using namespace wavestack;

int main(int argc, char** argv)
{
    if (argc < 2) {
        std::fprintf(stderr, "usage: float_choice OUT.md [N ...]\n");
        return 2;
    }
    std::vector<Index> sizes;
    for (int a = 2; a < argc; ++a) {
        char* end = nullptr;
        const long n = std::strtol(argv[a], &end, 10);
        if (*end != '\0' || n < 10) {
            std::fprintf(stderr, "float_choice: '%s' is not a training size (an integer >= 10)\n", argv[a]);
            return 2;
        }
        sizes.push_back(Index(n));
    }
    if (sizes.empty())
        sizes = {1000, 10000};

    std::ostringstream table;
    table << "# Float or double: FloatNetwork's choice on the suite's models\n\n"
          << "autoFit, fit seed 7, 2 threads, the suite's data; test relative RMSE on its 20 000 points. "
          << "Deviation: float-vs-double RMS on FloatNetwork's 1 024 check points over the model's held-out "
             "RMSE (float is kept at 0.25 or below). Produced by `./build/bench/float_choice "
             "bench/results/float_choice.md`.\n\n"
          << "| case (d) | N | double | plain float | FloatNetwork | keeps float | deviation / held-out RMSE | "
             "largest amplitude |\n|---|---|---|---|---|---|---|---|\n";
    const std::vector<suite::Case> all = suite::cases();
    for (Index n : sizes)
        for (std::size_t index = 0; index < all.size(); ++index) {
            const suite::Case& c = all[index];
            const auto test = suite::testSample(c, index);
            const auto train = suite::trainingSample(c, index, n);
            AutoFitOptions options;
            options.threads = 2;
            options.seed = 7;
            const Network network = autoFit(train.x, train.y, options);
            const Evaluator<float> plain(network.inputScaler(), network.outputScaler(), network.layers(),
                                         network.stateInput());
            const FloatNetwork guarded(network);
            const Eigen::MatrixXf x = test.x.cast<float>();
            const auto error = [&](const Matrix& p) { return measureErrors(p.col(0), test.y.col(0)).relativeRmse; };
            double largest = 0.0;
            for (const Layer& layer : network.layers())
                largest = std::max(largest, layer.amplitudes.cwiseAbs().maxCoeff());
            char row[512];
            std::snprintf(row, sizeof row, "| %s (%ld) | %ld | %.2e | %.2e | %.2e | %s | %.2g | %.2g |\n",
                          c.name.c_str(), long(c.domain.dimension()), long(n), error(network.evaluateBatch(test.x)),
                          error(plain.evaluateBatch(x).cast<double>()), error(guarded.evaluateBatch(x).cast<double>()),
                          guarded.single() ? "yes" : "no",
                          guarded.floatDeviation()[0] / network.record().heldOutMetrics[0].rmse, largest);
            std::fputs(row, stdout);
            std::fflush(stdout);
            table << row;
        }
    std::ofstream file(argv[1]);
    file << table.str();
    file.flush();
    if (!file.good()) {
        std::fprintf(stderr, "float_choice: could not write %s\n", argv[1]);
        return 1;
    }
    return 0;
}
