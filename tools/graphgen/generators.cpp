#include "generators.h"
