// Entry point placeholder; the subcommands are wired in src/cli/*.cpp.
int main() { return 0; }
