/* version.h: the one place the version is written. */
#ifndef HEADROOM_VERSION_H
#define HEADROOM_VERSION_H

#define HEADROOM_VERSION "0.2.0"

#endif
