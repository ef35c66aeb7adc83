// Linked into every test program of a sanitizer build (RATEWELL_SANITIZE):
// LeakSanitizer reads its suppressions from this hook. fontconfig keeps its
// configuration cache for the life of the process and does not free it at
// exit; that leak is in the system library, not in ratewell.
extern "C" const char* __lsan_default_suppressions() { return "leak:libfontconfig.so\n"; }
