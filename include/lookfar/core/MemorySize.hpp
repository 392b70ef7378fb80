#pragma once
// Memory budgets (--memory, docs/design.md): sizes as users write them, and the default budget.
#include <cstdint>
#include <string>

namespace lookfar {

/// Parses a size: a number (decimal allowed) and an optional binary unit K, M, G or T (KiB, MiB,
/// GiB, TiB; "KB", "MiB" … and lower case accepted), e.g. "512M", "2G", "1.5G"; a bare number
/// is bytes. Throws UsageError naming `what` for anything else or a size below 1 byte.
std::int64_t parseMemorySize(const std::string& text, const std::string& what);

/// A size for messages: "512 MiB", "1.5 GiB", "27.1 GiB".
std::string formatMemorySize(std::int64_t bytes);

/// Physical memory of this machine, bytes (0 when unknown).
std::int64_t physicalMemoryBytes();

/// The default budget: half of the physical memory (1 GiB when unknown).
std::int64_t defaultMemoryBudget();

}  // namespace lookfar
