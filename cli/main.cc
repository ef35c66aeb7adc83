#include "cli/commands.h"

int main(int argc, char** argv) { return ratewell::cli::Main(argc, argv); }
