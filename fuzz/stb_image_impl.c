// stb_image compiled into each fuzz harness with the harness's sanitizers and
// coverage, so libFuzzer sees inside the BMP/TGA/JPEG/PNM decoders and
// AddressSanitizer checks their reads. The symbols take the place of Debian's
// prebuilt libstb.so (the same header, the same default configuration).
#define STB_IMAGE_IMPLEMENTATION
#include <stb_image.h>
