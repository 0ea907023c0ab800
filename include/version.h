/* version.h: the one place the version is written. */
#ifndef HEADROOM_VERSION_H
#define HEADROOM_VERSION_H

#define HEADROOM_VERSION "0.3.0"

#endif
