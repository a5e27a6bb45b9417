/* main.c — the quantcap command line: dispatches to one subcommand. */
#include "quantcap.h"

#include <stdio.h>
#include <string.h>

int main(int argc, char **argv)
{
    if (argc < 2 || strcmp(argv[1], "--help") == 0) {
        printf("usage: quantcap COMMAND [OPTIONS]\n");
        return argc < 2 ? 2 : 0;
    }
    fprintf(stderr, "quantcap: error: unknown command '%s'\n", argv[1]);
    return 2;
}
