#pragma once
/// \file
/// A text output that appears complete or not at all: written to
/// "<path>.tmp" and renamed onto `path` by commit(). An OutputFile destroyed
/// without commit() (an error, Ctrl-C) removes its temporary file, so a failed
/// command never leaves a half-written CSV or report under the final name.
/// An empty path or "-" writes to standard output instead.

#include <cerrno>
#include <cstdio>
#include <cstring>
#include <fstream>
#include <iostream>
#include <string>
#include <string_view>

#include <fmt/format.h>

#include "input_error.hpp"

namespace wavestack::cli {

class OutputFile {
public:
    explicit OutputFile(std::string path) : m_path(std::move(path))
    {
        if (toStdout())
            return;
        m_temporary = m_path + ".tmp";
        m_file.open(m_temporary, std::ios::binary | std::ios::trunc);
        if (!m_file)
            throw InputError(fmt::format("{}: cannot create the output file (tried {}): {}", m_path, m_temporary,
                                         std::strerror(errno)));
    }
    OutputFile(const OutputFile&) = delete;
    OutputFile& operator=(const OutputFile&) = delete;

    ~OutputFile()
    {
        if (!toStdout() && !m_committed) {
            m_file.close();
            std::remove(m_temporary.c_str());
        }
    }

    bool toStdout() const { return m_path.empty() || m_path == "-"; }
    std::ostream& stream() { return toStdout() ? std::cout : m_file; }
    void write(std::string_view text) { stream().write(text.data(), std::streamsize(text.size())); }

    /// Flushes and moves the file into place; throws if anything failed.
    void commit()
    {
        stream().flush();
        if (!stream())
            throw std::runtime_error(fmt::format("{}: writing failed (disk full?)", toStdout() ? "stdout" : m_temporary));
        if (toStdout())
            return;
        m_file.close();
        if (std::rename(m_temporary.c_str(), m_path.c_str()) != 0)
            throw std::runtime_error(fmt::format("cannot rename {} to {}: {}", m_temporary, m_path, std::strerror(errno)));
        m_committed = true;
    }

private:
    std::string m_path, m_temporary;
    std::ofstream m_file;
    bool m_committed = false;
};

}  // namespace wavestack::cli
