// C++ example of libphasebound: RAII handles around the C ABI, local table
// evaluation for a vector of cells and a server check. Exits non-zero on
// any mismatch. Usage: PHASEBOUND_SERVER=127.0.0.1:50051 ./example_cpp
#include <cmath>
#include <cstdlib>
#include <iostream>
#include <stdexcept>
#include <string>
#include <vector>

#include "phasebound.h"

namespace {

// Error turns a return code into an exception carrying the library's message.
void check(int rc, const char *what) {
	if (rc != PHASEBOUND_OK) {
		throw std::runtime_error(std::string(what) + ": " + phasebound_last_error());
	}
}

class Client {
public:
	explicit Client(const std::string &address) {
		const char *token = std::getenv("PHASEBOUND_TOKEN_FILE");
		check(phasebound_connect(address.c_str(), token, nullptr, nullptr, nullptr, &h_), "connect");
	}
	~Client() { phasebound_close(h_); }
	Client(const Client &) = delete;
	Client &operator=(const Client &) = delete;
	phasebound_client handle() const { return h_; }

private:
	phasebound_client h_ = 0;
};

// Tables are a substance's compiled tables, evaluated in this process.
class Tables {
public:
	Tables(const Client &c, const std::string &substance) {
		check(phasebound_tables_fetch(c.handle(), substance.c_str(), &h_), "fetch tables");
	}
	~Tables() { phasebound_tables_free(h_); }
	Tables(const Tables &) = delete;
	Tables &operator=(const Tables &) = delete;

	// temperature returns T(P) on a curve for every pressure.
	std::vector<double> temperature(int curve, const std::vector<double> &p) const {
		std::vector<double> t(p.size());
		check(phasebound_tables_evaluate(h_, curve, nullptr, PHASEBOUND_GIVEN_PRESSURE, p.data(), p.size(), t.data(),
		                                 nullptr, nullptr, nullptr, nullptr),
		      "local T(P)");
		return t;
	}
	// pressure returns P(T) on a curve (branch "" picks it by T).
	std::vector<double> pressure(int curve, const std::string &branch, const std::vector<double> &t) const {
		std::vector<double> p(t.size());
		check(phasebound_tables_evaluate(h_, curve, branch.c_str(), PHASEBOUND_GIVEN_TEMPERATURE, t.data(), t.size(),
		                                 nullptr, p.data(), nullptr, nullptr, nullptr),
		      "local P(T)");
		return p;
	}
	bool refresh() {
		int changed = 0;
		check(phasebound_tables_refresh(h_, &changed), "refresh");
		return changed != 0;
	}

private:
	phasebound_tables h_ = 0;
};

int failures = 0;

void expect(const std::string &what, double got, double want, double rel_tol) {
	double rel = std::fabs(got - want) / std::fabs(want);
	if (!(rel <= rel_tol)) {
		std::cerr << "FAIL " << what << ": got " << got << ", want " << want << " (relative difference " << rel << ")\n";
		++failures;
	} else {
		std::cout << "ok   " << what << ": " << got << "\n";
	}
}

} // namespace

int main() {
	const char *addr = std::getenv("PHASEBOUND_SERVER");
	if (addr == nullptr || *addr == '\0') {
		std::cerr << "set PHASEBOUND_SERVER to the server's HOST:PORT\n";
		return 2;
	}
	std::cout.precision(12);
	try {
		Client client(addr);
		Tables water(client, "water");

		auto p = water.pressure(PHASEBOUND_SATURATION, "", {300.0});
		expect("local Psat(300 K) [Pa]", p[0], 3536.58941, 1e-8); // IAPWS R7-97(2012) IF97, Table 35 check value (from memory)
		auto t = water.temperature(PHASEBOUND_SATURATION, {0.1e6});
		expect("local Tsat(0.1 MPa) [K]", t[0], 372.755919, 1e-8); // IAPWS R7-97(2012) IF97, Table 36 check value (from memory)

		// Cells: melting temperatures of ice Ih under pressure, locally,
		// checked against the exact path of the server.
		std::vector<double> pcell;
		for (int i = 0; i < 50; i++) {
			pcell.push_back(1e5 + 2e8 * i / 49.0);
		}
		auto tm = water.temperature(PHASEBOUND_MELTING, pcell);
		std::vector<double> te(pcell.size());
		check(phasebound_evaluate(client.handle(), "water", PHASEBOUND_MELTING, nullptr, PHASEBOUND_GIVEN_PRESSURE, pcell.data(),
		                          pcell.size(), PHASEBOUND_EXACT, te.data(), nullptr, nullptr, nullptr, nullptr),
		      "exact T(P)");
		double worst = 0;
		for (size_t i = 0; i < tm.size(); i++) {
			worst = std::fmax(worst, std::fabs(tm[i] - te[i]) / te[i]);
		}
		std::cout << "melting T(P), local tables vs exact: max relative difference " << worst << "\n";
		if (!(worst <= 1e-10)) {
			std::cerr << "FAIL melting T(P) differs from the exact path by more than the table tolerance\n";
			++failures;
		}
		// Pressure melting: ice Ih melts lower under pressure.
		if (!(tm.back() < tm.front())) {
			std::cerr << "FAIL ice Ih melting temperature should fall with pressure\n";
			++failures;
		}
		if (water.refresh()) {
			std::cerr << "FAIL refresh reported a change on an unchanged catalog\n";
			++failures;
		}
		// Errors arrive as exceptions with the library's message.
		try {
			Tables none(client, "unobtainium");
			std::cerr << "FAIL fetching an unknown substance succeeded\n";
			++failures;
		} catch (const std::runtime_error &e) {
			std::cout << "ok   unknown substance: " << e.what() << "\n";
		}
	} catch (const std::exception &e) {
		std::cerr << "FAIL " << e.what() << "\n";
		return 1;
	}
	if (failures) {
		std::cerr << "C++ example: " << failures << " checks failed\n";
		return 1;
	}
	std::cout << "C++ example: all checks passed\n";
	return 0;
}
