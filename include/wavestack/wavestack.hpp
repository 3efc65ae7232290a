#pragma once
/// \file
/// The header to include: fit by hand, save, load, evaluate.
///
/// wavestack fits fast surrogate models (random-Fourier-feature networks) to
/// samples of an expensive function, for simulation codes to evaluate in their
/// inner loops. Start with wavestack::fit and wavestack::Network.
///
/// The automatic search, wavestack::autoFit, has its own header,
/// wavestack/train/auto_fit.hpp: include it only where you fit with it. Its
/// leave-one-out scoring instantiates Eigen's BDCSVD, which adds about 20 s
/// of GCC 12 compile time to each translation unit that includes it (a unit
/// with only this header: 32 s at -O3; with the SVD as well: 51 s).

#include "wavestack/check/metrics.hpp"
#include "wavestack/core/allocator.hpp"
#include "wavestack/core/error.hpp"
#include "wavestack/core/random.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/features/feature_group.hpp"
#include "wavestack/features/fourier_map.hpp"
#include "wavestack/features/ridge_map.hpp"
#include "wavestack/parallel/reduction.hpp"
#include "wavestack/io/model_file.hpp"
#include "wavestack/model/domain.hpp"
#include "wavestack/model/evaluator.hpp"
#include "wavestack/model/float_network.hpp"
#include "wavestack/model/guarded_network.hpp"
#include "wavestack/model/layer.hpp"
#include "wavestack/model/network.hpp"
#include "wavestack/model/record.hpp"
#include "wavestack/model/scaler.hpp"
#include "wavestack/sampling/fixed_sampler.hpp"
#include "wavestack/sampling/gaussian_sampler.hpp"
#include "wavestack/sampling/metropolis_sampler.hpp"
#include "wavestack/solve/gram.hpp"
#include "wavestack/solve/ridge_solver.hpp"
#include "wavestack/train/fit.hpp"
#include "wavestack/train/layer_problem.hpp"
