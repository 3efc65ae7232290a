#pragma once
/// \file
/// The exception types wavestack throws. Every error derives from
/// wavestack::Error, so a host can catch the library's failures in one place.
/// Messages say what was wrong and where (argument, row, column).

#include <stdexcept>
#include <string>

namespace wavestack {

/// Base of every exception the library throws.
class Error : public std::runtime_error {
public:
    using std::runtime_error::runtime_error;
};

/// An argument or data set the library cannot work with (NaN, wrong shape,
/// out-of-range setting). Nothing was changed when this is thrown.
class InvalidInput : public Error {
public:
    using Error::Error;
};

/// A computation that could not produce a trustworthy result.
class NumericalError : public Error {
public:
    using Error::Error;
};

/// Training stopped because a progress callback asked for it.
class Cancelled : public Error {
public:
    using Error::Error;
};

}  // namespace wavestack
