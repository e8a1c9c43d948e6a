/* law.c — the growth laws of DESIGN §2.2 (see law.h for the table). */
#include "nervegap/law.h"

#include <math.h>
#include <string.h>

int ng_law_parse(const char *text, ng_law *out, ng_error *err)
{
    static const struct { const char *name; ng_law law; } table[] = {
        {"scaled", NG_LAW_SCALED},
        {"shifted", NG_LAW_SHIFTED},
        {"power", NG_LAW_POWER},
    };
    for (size_t i = 0; i < sizeof table / sizeof table[0]; i++) {
        if (strcmp(text, table[i].name) == 0) {
            *out = table[i].law;
            return NG_OK;
        }
    }
    return ng_error_set(err, NG_ERR_USAGE,
                        "--law: unknown growth law '%s' (expected scaled, "
                        "shifted or power)", text);
}

const char *ng_law_name(ng_law law)
{
    switch (law) {
    case NG_LAW_SCALED: return "scaled";
    case NG_LAW_SHIFTED: return "shifted";
    case NG_LAW_POWER: return "power";
    }
    return "unknown";
}

double ng_law_birth(ng_law law, double rho)
{
    return law == NG_LAW_SCALED ? 0.0 : rho;
}

double ng_law_radius(ng_law law, double rho, double t)
{
    switch (law) {
    case NG_LAW_SCALED: return t * rho;
    case NG_LAW_SHIFTED: return t >= rho ? t - rho : 0.0;
    case NG_LAW_POWER: return t >= rho ? sqrt(t * t - rho * rho) : 0.0;
    }
    return 0.0;
}

double ng_law_reach(ng_law law, double rho, double s)
{
    switch (law) {
    case NG_LAW_SCALED:
        if (s == 0.0) return 0.0;
        return rho > 0.0 ? s / rho : INFINITY;
    case NG_LAW_SHIFTED: return s + rho;
    case NG_LAW_POWER: return hypot(s, rho);
    }
    return INFINITY;
}
