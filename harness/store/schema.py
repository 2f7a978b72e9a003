"""The store's schema, only ever changed through named, numbered forward migrations.

``SCHEMA_VERSION`` is the number of migrations this code knows. A store whose recorded version
is higher was written by a newer saltbench and is refused untouched.
"""

from __future__ import annotations

MIGRATIONS: list[tuple[str, str]] = [
    ("0001_reference_data", """
CREATE TABLE sources (
    key TEXT PRIMARY KEY CHECK (length(key) > 0),
    authors TEXT NOT NULL CHECK (length(authors) > 0),
    title TEXT NOT NULL CHECK (length(title) > 0),
    year INTEGER NOT NULL CHECK (year BETWEEN 1800 AND 2100),
    journal TEXT, publisher TEXT, volume TEXT, issue TEXT, pages TEXT, edition TEXT,
    doi TEXT, url TEXT, note TEXT,
    citation TEXT NOT NULL,
    origin TEXT NOT NULL CHECK (origin IN ('bundled', 'user')),
    file TEXT NOT NULL,
    content_hash TEXT NOT NULL
);
CREATE TABLE ions (
    formula TEXT PRIMARY KEY,
    name TEXT NOT NULL,
    charge INTEGER NOT NULL CHECK (charge <> 0),
    molar_mass REAL NOT NULL CHECK (molar_mass > 0),
    origin TEXT NOT NULL CHECK (origin IN ('builtin', 'bundled', 'user'))
);
CREATE TABLE electrolytes (
    name TEXT PRIMARY KEY,
    cation TEXT NOT NULL REFERENCES ions(formula),
    anion TEXT NOT NULL REFERENCES ions(formula),
    nu_cation INTEGER NOT NULL CHECK (nu_cation > 0),
    nu_anion INTEGER NOT NULL CHECK (nu_anion > 0),
    charge_type TEXT NOT NULL,
    molar_mass REAL NOT NULL CHECK (molar_mass > 0),
    origin TEXT NOT NULL CHECK (origin IN ('builtin', 'bundled', 'user'))
);
CREATE TABLE datasets (
    id INTEGER PRIMARY KEY,
    key TEXT NOT NULL,
    origin TEXT NOT NULL CHECK (origin IN ('bundled', 'user')),
    provider TEXT NOT NULL,
    electrolyte TEXT NOT NULL REFERENCES electrolytes(name),
    property TEXT NOT NULL CHECK (property IN ('gamma_pm', 'osmotic', 'water_activity')),
    basis TEXT NOT NULL CHECK (basis IN ('linear', 'ln', 'log10')),
    scale TEXT NOT NULL CHECK (scale IN ('molality', 'molarity', 'mole_fraction')),
    temperature_k REAL NOT NULL CHECK (temperature_k BETWEEN 273.15 AND 573.15),
    pressure_pa REAL NOT NULL CHECK (pressure_pa > 0),
    source TEXT NOT NULL REFERENCES sources(key),
    table_ref TEXT NOT NULL,
    precision REAL NOT NULL CHECK (precision > 0),
    uncertainty REAL CHECK (uncertainty IS NULL OR uncertainty > 0),
    typed TEXT NOT NULL,
    from_memory INTEGER NOT NULL CHECK (from_memory IN (0, 1)),
    note TEXT NOT NULL DEFAULT '',
    file TEXT NOT NULL,
    content_hash TEXT NOT NULL,
    n_points INTEGER NOT NULL CHECK (n_points > 0),
    UNIQUE (origin, key)
);
CREATE INDEX datasets_by_electrolyte ON datasets (electrolyte, property);
CREATE TABLE points (
    dataset_id INTEGER NOT NULL REFERENCES datasets(id) ON DELETE CASCADE,
    seq INTEGER NOT NULL,
    molality REAL NOT NULL CHECK (molality > 0),
    value REAL NOT NULL,
    value_printed REAL NOT NULL,
    u_value REAL NOT NULL CHECK (u_value > 0),
    line INTEGER,
    PRIMARY KEY (dataset_id, seq),
    UNIQUE (dataset_id, molality)
);
CREATE TABLE parameter_sets (
    id INTEGER PRIMARY KEY,
    set_id TEXT NOT NULL UNIQUE,
    kind TEXT NOT NULL CHECK (kind IN ('published', 'fitted')),
    origin TEXT NOT NULL CHECK (origin IN ('bundled', 'user')),
    provider TEXT NOT NULL,
    model TEXT NOT NULL,
    source TEXT REFERENCES sources(key),
    table_ref TEXT NOT NULL DEFAULT '',
    temperature_k REAL NOT NULL CHECK (temperature_k > 0),
    a_phi REAL CHECK (a_phi IS NULL OR a_phi > 0),
    typed TEXT NOT NULL DEFAULT '',
    from_memory INTEGER NOT NULL DEFAULT 0 CHECK (from_memory IN (0, 1)),
    note TEXT NOT NULL DEFAULT '',
    file TEXT NOT NULL DEFAULT '',
    content_hash TEXT NOT NULL,
    settings TEXT NOT NULL DEFAULT '{}',
    data_hashes TEXT NOT NULL DEFAULT '[]',
    software_version TEXT NOT NULL DEFAULT ''
);
CREATE TABLE parameter_values (
    set_pk INTEGER NOT NULL REFERENCES parameter_sets(id) ON DELETE CASCADE,
    target TEXT NOT NULL,
    target_kind TEXT NOT NULL CHECK (target_kind IN ('electrolyte', 'ion')),
    name TEXT NOT NULL,
    value REAL NOT NULL,
    stderr REAL CHECK (stderr IS NULL OR stderr >= 0),
    m_max REAL CHECK (m_max IS NULL OR m_max > 0),
    PRIMARY KEY (set_pk, target, name)
);
CREATE TABLE parameter_covariances (
    set_pk INTEGER NOT NULL REFERENCES parameter_sets(id) ON DELETE CASCADE,
    names TEXT NOT NULL,
    matrix TEXT NOT NULL,
    PRIMARY KEY (set_pk)
);
"""),
    ("0002_measurements", """
CREATE TABLE measurement_sets (
    id INTEGER PRIMARY KEY,
    key TEXT NOT NULL UNIQUE CHECK (length(key) > 0),
    origin TEXT NOT NULL CHECK (origin IN ('bundled', 'user')),
    electrolyte TEXT NOT NULL REFERENCES electrolytes(name),
    kind TEXT NOT NULL CHECK (kind IN ('emf', 'electrode_calibration', 'isopiestic',
                                       'water_activity', 'vapour_pressure')),
    temperature_k REAL NOT NULL CHECK (temperature_k BETWEEN 273.15 AND 573.15),
    source TEXT REFERENCES sources(key),
    typed TEXT NOT NULL CHECK (length(typed) > 0),
    from_memory INTEGER NOT NULL CHECK (from_memory IN (0, 1)),
    method TEXT NOT NULL CHECK (length(method) > 0),
    method_version TEXT NOT NULL CHECK (length(method_version) > 0),
    settings TEXT NOT NULL DEFAULT '{}',
    note TEXT NOT NULL DEFAULT '',
    file TEXT NOT NULL,
    content_hash TEXT NOT NULL,
    n_readings INTEGER NOT NULL CHECK (n_readings > 0)
);
CREATE TABLE readings (
    set_id INTEGER NOT NULL REFERENCES measurement_sets(id) ON DELETE CASCADE,
    seq INTEGER NOT NULL,
    molality REAL CHECK (molality IS NULL OR molality > 0),
    u_molality REAL CHECK (u_molality IS NULL OR u_molality >= 0),
    activity REAL CHECK (activity IS NULL OR activity > 0),
    emf_v REAL CHECK (emf_v IS NULL OR abs(emf_v) < 5.0),
    reference_molality REAL CHECK (reference_molality IS NULL OR reference_molality > 0),
    water_activity REAL CHECK (water_activity IS NULL OR (water_activity > 0 AND water_activity <= 1)),
    pressure_pa REAL CHECK (pressure_pa IS NULL OR pressure_pa > 0),
    u_reading REAL NOT NULL CHECK (u_reading > 0),
    printed_unit TEXT NOT NULL DEFAULT '',
    line INTEGER,
    PRIMARY KEY (set_id, seq),
    CHECK (molality IS NOT NULL OR activity IS NOT NULL),
    CHECK ((emf_v IS NOT NULL) + (reference_molality IS NOT NULL) + (water_activity IS NOT NULL)
           + (pressure_pa IS NOT NULL) = 1)
);
CREATE TABLE reductions (
    id INTEGER PRIMARY KEY,
    set_id INTEGER NOT NULL UNIQUE REFERENCES measurement_sets(id) ON DELETE CASCADE,
    dataset_id INTEGER UNIQUE REFERENCES datasets(id) ON DELETE CASCADE,
    method TEXT NOT NULL CHECK (length(method) > 0),
    method_version TEXT NOT NULL CHECK (length(method_version) > 0),
    input_hash TEXT NOT NULL,
    software_version TEXT NOT NULL,
    result TEXT NOT NULL DEFAULT '{}'
);
"""),
    # Tables that print three significant figures give each value its own last digit.
    ("0003_point_precision", """
ALTER TABLE points ADD COLUMN precision REAL CHECK (precision IS NULL OR precision > 0);
"""),
    # Mixing parameters (Pitzer's theta and psi) belong to groups of ions, stored as target
    # 'K+/Na+' or 'K+/Na+/Cl-' of kind 'ions'; SQLite changes a CHECK only by rebuilding the table.
    ("0004_parameters_of_ion_groups", """
CREATE TABLE parameter_values_new (
    set_pk INTEGER NOT NULL REFERENCES parameter_sets(id) ON DELETE CASCADE,
    target TEXT NOT NULL,
    target_kind TEXT NOT NULL CHECK (target_kind IN ('electrolyte', 'ion', 'ions')),
    name TEXT NOT NULL,
    value REAL NOT NULL,
    stderr REAL CHECK (stderr IS NULL OR stderr >= 0),
    m_max REAL CHECK (m_max IS NULL OR m_max > 0),
    PRIMARY KEY (set_pk, target, name)
);
INSERT INTO parameter_values_new (set_pk, target, target_kind, name, value, stderr, m_max)
    SELECT set_pk, target, target_kind, name, value, stderr, m_max FROM parameter_values;
DROP TABLE parameter_values;
ALTER TABLE parameter_values_new RENAME TO parameter_values
"""),
    # Mixture datasets: one property at compositions of several salts. A point keeps the amounts
    # its file gave (JSON, in the order of the dataset's 'columns') and, in mixture_point_ions,
    # the molality of every ion of the system resolved from them.
    ("0005_mixture_datasets", """
CREATE TABLE mixture_datasets (
    id INTEGER PRIMARY KEY,
    key TEXT NOT NULL CHECK (length(key) > 0),
    origin TEXT NOT NULL CHECK (origin IN ('bundled', 'user')),
    provider TEXT NOT NULL,
    system TEXT NOT NULL CHECK (length(system) > 0),
    salts TEXT NOT NULL,
    columns TEXT NOT NULL,
    property TEXT NOT NULL CHECK (property IN ('gamma_pm', 'ln_gamma_pm', 'osmotic', 'water_activity')),
    salt TEXT,
    temperature_k REAL NOT NULL CHECK (temperature_k BETWEEN 273.15 AND 573.15),
    source TEXT NOT NULL REFERENCES sources(key),
    table_ref TEXT NOT NULL,
    uncertainty REAL CHECK (uncertainty IS NULL OR uncertainty > 0),
    typed TEXT NOT NULL CHECK (length(typed) > 0),
    from_memory INTEGER NOT NULL CHECK (from_memory IN (0, 1)),
    invented INTEGER NOT NULL CHECK (invented IN (0, 1)),
    note TEXT NOT NULL DEFAULT '',
    file TEXT NOT NULL,
    content_hash TEXT NOT NULL,
    n_points INTEGER NOT NULL CHECK (n_points > 0),
    UNIQUE (origin, key),
    CHECK ((property IN ('gamma_pm', 'ln_gamma_pm')) = (salt IS NOT NULL))
);
CREATE INDEX mixture_datasets_by_system ON mixture_datasets (system, property);
CREATE TABLE mixture_points (
    dataset_id INTEGER NOT NULL REFERENCES mixture_datasets(id) ON DELETE CASCADE,
    seq INTEGER NOT NULL CHECK (seq >= 0),
    amounts TEXT NOT NULL,
    ionic_strength REAL NOT NULL CHECK (ionic_strength > 0),
    value REAL NOT NULL,
    value_printed REAL NOT NULL,
    u_value REAL NOT NULL CHECK (u_value > 0),
    u_printed REAL NOT NULL CHECK (u_printed > 0),
    line INTEGER,
    PRIMARY KEY (dataset_id, seq)
);
CREATE TABLE mixture_point_ions (
    dataset_id INTEGER NOT NULL,
    seq INTEGER NOT NULL,
    position INTEGER NOT NULL CHECK (position >= 0),
    ion TEXT NOT NULL REFERENCES ions(formula),
    molality REAL NOT NULL CHECK (molality >= 0),
    PRIMARY KEY (dataset_id, seq, position),
    FOREIGN KEY (dataset_id, seq) REFERENCES mixture_points(dataset_id, seq) ON DELETE CASCADE
)
"""),
    # EMF readings of one salt in a background salt (H2 | HCl(m1), NaCl(m2) | AgCl | Ag): the
    # background's molality per reading, and the mixture dataset such a set reduces to.
    ("0006_mixture_readings", """
ALTER TABLE readings ADD COLUMN background_molality REAL
    CHECK (background_molality IS NULL OR background_molality >= 0);
ALTER TABLE reductions ADD COLUMN mixture_dataset_id INTEGER
    REFERENCES mixture_datasets(id) ON DELETE CASCADE
"""),
    # Electrode calibrations (ion-selective: standards in a background, separate solutions of
    # interferents, samples) and pH calibrations with certified buffers: one set per file, its
    # rows in SI with each row's own salts (JSON, mol/kg) beside the set's background.
    ("0007_electrode_readings", """
CREATE TABLE electrode_sets (
    id INTEGER PRIMARY KEY,
    key TEXT NOT NULL UNIQUE CHECK (length(key) > 0),
    kind TEXT NOT NULL CHECK (kind IN ('electrode', 'ph_buffers')),
    ion TEXT,
    interferents TEXT NOT NULL DEFAULT '[]',
    background TEXT NOT NULL DEFAULT '[]',
    background_text TEXT NOT NULL DEFAULT '',
    temperature_k REAL NOT NULL CHECK (temperature_k BETWEEN 273.15 AND 573.15),
    u_temperature_k REAL NOT NULL DEFAULT 0 CHECK (u_temperature_k >= 0),
    reference_electrode TEXT NOT NULL CHECK (length(reference_electrode) > 0),
    electrode TEXT NOT NULL DEFAULT '',
    source TEXT NOT NULL REFERENCES sources(key),
    typed TEXT NOT NULL CHECK (length(typed) > 0),
    from_memory INTEGER NOT NULL CHECK (from_memory IN (0, 1)),
    note TEXT NOT NULL DEFAULT '',
    file TEXT NOT NULL,
    content_hash TEXT NOT NULL,
    n_rows INTEGER NOT NULL CHECK (n_rows > 0),
    CHECK ((kind = 'electrode') = (ion IS NOT NULL))
);
CREATE TABLE electrode_rows (
    set_id INTEGER NOT NULL REFERENCES electrode_sets(id) ON DELETE CASCADE,
    seq INTEGER NOT NULL,
    role TEXT NOT NULL CHECK (role IN ('standard', 'separate', 'sample', 'buffer')),
    label TEXT NOT NULL DEFAULT '',
    salts TEXT NOT NULL DEFAULT '[]',
    emf_v REAL NOT NULL CHECK (abs(emf_v) < 5.0),
    u_emf_v REAL NOT NULL CHECK (u_emf_v > 0),
    temperature_k REAL NOT NULL CHECK (temperature_k BETWEEN 273.15 AND 573.15),
    ph REAL CHECK (ph IS NULL OR (ph > 0 AND ph < 14)),
    u_ph REAL CHECK (u_ph IS NULL OR u_ph >= 0),
    ionic_strength REAL CHECK (ionic_strength IS NULL OR ionic_strength >= 0),
    line INTEGER,
    PRIMARY KEY (set_id, seq),
    CHECK (role != 'buffer' OR ph IS NOT NULL),
    CHECK (role != 'buffer' OR ionic_strength IS NULL OR ionic_strength <= 0.1)
)
"""),
    # Temperature forms (issue 21): a set may give a parameter as p(T) = sum_j c_j f_j(T). The
    # form's name and the range its authors fitted sit on the set; parameter_values keeps the
    # first coefficient (the value at the set's temperature, so a reader that knows no forms
    # still sees the 25 °C values) and parameter_coefficients the others. Numbered 0008 and
    # touching none of 0007's tables (electrode readings), so the two apply in either order of
    # writing; the list below is applied in its own order.
    ("0008_temperature_forms", """
ALTER TABLE parameter_sets ADD COLUMN temperature_form TEXT
    CHECK (temperature_form IS NULL OR length(temperature_form) > 0);
ALTER TABLE parameter_sets ADD COLUMN t_min_k REAL CHECK (t_min_k IS NULL OR t_min_k > 0);
ALTER TABLE parameter_sets ADD COLUMN t_max_k REAL CHECK (t_max_k IS NULL OR t_max_k > 0);
CREATE TABLE parameter_coefficients (
    set_pk INTEGER NOT NULL REFERENCES parameter_sets(id) ON DELETE CASCADE,
    target TEXT NOT NULL,
    name TEXT NOT NULL,
    coefficient TEXT NOT NULL CHECK (length(coefficient) > 0),
    value REAL NOT NULL,
    PRIMARY KEY (set_pk, target, name, coefficient),
    FOREIGN KEY (set_pk, target, name) REFERENCES parameter_values(set_pk, target, name) ON DELETE CASCADE
)
"""),
    # Data at several temperatures (issue 21): each point keeps its own temperature, a dataset its
    # range beside its header (nominal) temperature (NULL in either: the dataset's temperature_k,
    # so existing rows, left NULL, and rows written as before still mean what they meant; a
    # partial index keeps such rows' molalities unique as the old UNIQUE did), and the thermal properties L_phi (J/mol)
    # and Cp_phi (J/(K mol)) join the closed list; a reading (an EMF series at several
    # temperatures) keeps its own temperature likewise. SQLite changes a CHECK or a UNIQUE only by
    # rebuilding the table; both tables are referenced by foreign keys, so this migration runs
    # with foreign keys off (``FOREIGN_KEYS_OFF``) and is checked by foreign_key_check before
    # it commits (the procedure of SQLite's "ALTER TABLE", section "Making other kinds of table
    # schema changes").
    ("0009_point_temperatures", """
CREATE TABLE datasets_new (
    id INTEGER PRIMARY KEY,
    key TEXT NOT NULL,
    origin TEXT NOT NULL CHECK (origin IN ('bundled', 'user')),
    provider TEXT NOT NULL,
    electrolyte TEXT NOT NULL REFERENCES electrolytes(name),
    property TEXT NOT NULL CHECK (property IN ('gamma_pm', 'osmotic', 'water_activity',
                                               'L_phi', 'Cp_phi')),
    basis TEXT NOT NULL CHECK (basis IN ('linear', 'ln', 'log10')),
    scale TEXT NOT NULL CHECK (scale IN ('molality', 'molarity', 'mole_fraction')),
    temperature_k REAL NOT NULL CHECK (temperature_k BETWEEN 273.15 AND 573.15),
    pressure_pa REAL NOT NULL CHECK (pressure_pa > 0),
    source TEXT NOT NULL REFERENCES sources(key),
    table_ref TEXT NOT NULL,
    precision REAL NOT NULL CHECK (precision > 0),
    uncertainty REAL CHECK (uncertainty IS NULL OR uncertainty > 0),
    typed TEXT NOT NULL,
    from_memory INTEGER NOT NULL CHECK (from_memory IN (0, 1)),
    note TEXT NOT NULL DEFAULT '',
    file TEXT NOT NULL,
    content_hash TEXT NOT NULL,
    n_points INTEGER NOT NULL CHECK (n_points > 0),
    t_min_k REAL CHECK (t_min_k IS NULL OR t_min_k BETWEEN 273.15 AND 573.15),
    t_max_k REAL CHECK (t_max_k IS NULL OR t_max_k BETWEEN 273.15 AND 573.15),
    unit TEXT NOT NULL DEFAULT '',
    UNIQUE (origin, key),
    CHECK (t_min_k IS NULL OR t_max_k IS NULL OR t_min_k <= t_max_k)
);
INSERT INTO datasets_new (id, key, origin, provider, electrolyte, property, basis, scale,
    temperature_k, pressure_pa, source, table_ref, precision, uncertainty, typed, from_memory, note,
    file, content_hash, n_points)
    SELECT id, key, origin, provider, electrolyte, property, basis, scale, temperature_k,
           pressure_pa, source, table_ref, precision, uncertainty, typed, from_memory, note, file,
           content_hash, n_points FROM datasets;
DROP TABLE datasets;
ALTER TABLE datasets_new RENAME TO datasets;
CREATE INDEX datasets_by_electrolyte ON datasets (electrolyte, property);
CREATE TABLE points_new (
    dataset_id INTEGER NOT NULL REFERENCES datasets(id) ON DELETE CASCADE,
    seq INTEGER NOT NULL,
    molality REAL NOT NULL CHECK (molality > 0),
    value REAL NOT NULL,
    value_printed REAL NOT NULL,
    u_value REAL NOT NULL CHECK (u_value > 0),
    line INTEGER,
    precision REAL CHECK (precision IS NULL OR precision > 0),
    temperature_k REAL CHECK (temperature_k IS NULL OR temperature_k BETWEEN 273.15 AND 573.15),
    PRIMARY KEY (dataset_id, seq),
    UNIQUE (dataset_id, temperature_k, molality)
);
INSERT INTO points_new (dataset_id, seq, molality, value, value_printed, u_value, line, precision,
    temperature_k)
    SELECT dataset_id, seq, molality, value, value_printed, u_value, line, precision, NULL
    FROM points;
DROP TABLE points;
ALTER TABLE points_new RENAME TO points;
CREATE UNIQUE INDEX points_molality_once_at_the_datasets_temperature ON points (dataset_id, molality)
    WHERE temperature_k IS NULL;
ALTER TABLE readings ADD COLUMN temperature_k REAL
    CHECK (temperature_k IS NULL OR temperature_k BETWEEN 273.15 AND 573.15)
"""),
]

SCHEMA_VERSION = len(MIGRATIONS)

#: Migrations that rebuild a table other tables reference: run with foreign keys off (a DROP
#: TABLE would otherwise cascade into the referencing rows), then checked before commit.
FOREIGN_KEYS_OFF = frozenset({"0009_point_temperatures"})
