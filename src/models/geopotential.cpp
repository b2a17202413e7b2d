// The geopotential conversion is inline in the header (it runs for every
// sample); this file pins its basic properties at compile time.
#include "baroz/models/geopotential.hpp"

namespace baroz {

static_assert(geopotential_from_geometric(0.0) == 0.0);
static_assert(geometric_from_geopotential(0.0) == 0.0);
static_assert(geometric_per_geopotential(0.0) == 1.0);
static_assert(geometric_height_difference(0.0, 1000.0) == geometric_from_geopotential(1000.0));
// Z > H at every altitude except sea level (USSA76 eq. 18).
static_assert(geometric_from_geopotential(11000.0) > 11000.0);
static_assert(geometric_from_geopotential(-2000.0) > -2000.0);

}  // namespace baroz
