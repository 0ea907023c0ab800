/* version.h: the one place the version is written. HEADROOM_VERSION is the
 * release number (semantic versioning); HEADROOM_BUILD_VERSION is what
 * --version and the reports print: built from a git checkout, `git describe`
 * (make writes it to the build folder's version_git.h, scripts/version.sh):
 * the tag and the commits since it, or this number and the commit when no tag
 * is behind it; elsewhere this number alone. */
#ifndef HEADROOM_VERSION_H
#define HEADROOM_VERSION_H

#define HEADROOM_VERSION "0.3.0"

#if defined(__has_include)
#if __has_include("version_git.h")
#include "version_git.h"
#endif
#endif

#if defined(HEADROOM_GIT_DESCRIBE) && HEADROOM_GIT_TAGGED
#define HEADROOM_BUILD_VERSION HEADROOM_GIT_DESCRIBE
#elif defined(HEADROOM_GIT_DESCRIBE)
#define HEADROOM_BUILD_VERSION HEADROOM_VERSION "+g" HEADROOM_GIT_DESCRIBE
#else
#define HEADROOM_BUILD_VERSION HEADROOM_VERSION
#endif

#endif
