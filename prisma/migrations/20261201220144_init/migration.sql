-- CreateTable
CREATE TABLE "TubeType" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "designation" TEXT NOT NULL,
    "aliases" TEXT NOT NULL DEFAULT '',
    "tubeClass" TEXT NOT NULL,
    "base" TEXT NOT NULL,
    "sections" INTEGER NOT NULL,
    "spec" TEXT NOT NULL,
    "userAdded" BOOLEAN NOT NULL DEFAULT false,
    "updatedAt" DATETIME NOT NULL
);

-- CreateTable
CREATE TABLE "Tube" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "label" TEXT NOT NULL,
    "typeId" INTEGER NOT NULL,
    "maker" TEXT NOT NULL DEFAULT '',
    "dateCode" TEXT NOT NULL DEFAULT '',
    "location" TEXT NOT NULL DEFAULT '',
    "state" TEXT NOT NULL DEFAULT 'stock',
    "notes" TEXT NOT NULL DEFAULT '',
    "verdict" TEXT NOT NULL DEFAULT 'untested',
    "percent" REAL,
    "createdAt" DATETIME NOT NULL DEFAULT CURRENT_TIMESTAMP,
    "updatedAt" DATETIME NOT NULL,
    CONSTRAINT "Tube_typeId_fkey" FOREIGN KEY ("typeId") REFERENCES "TubeType" ("id") ON DELETE RESTRICT ON UPDATE CASCADE
);

-- CreateTable
CREATE TABLE "TubeEvent" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "tubeId" INTEGER NOT NULL,
    "at" DATETIME NOT NULL DEFAULT CURRENT_TIMESTAMP,
    "kind" TEXT NOT NULL,
    "fromValue" TEXT NOT NULL DEFAULT '',
    "toValue" TEXT NOT NULL DEFAULT '',
    "note" TEXT NOT NULL DEFAULT '',
    CONSTRAINT "TubeEvent_tubeId_fkey" FOREIGN KEY ("tubeId") REFERENCES "Tube" ("id") ON DELETE CASCADE ON UPDATE CASCADE
);

-- CreateTable
CREATE TABLE "TestSession" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "date" TEXT NOT NULL,
    "instrument" TEXT NOT NULL,
    "heaterVolts" REAL,
    "plateVolts" REAL,
    "screenVolts" REAL,
    "gridVolts" REAL,
    "notes" TEXT NOT NULL DEFAULT '',
    "createdAt" DATETIME NOT NULL DEFAULT CURRENT_TIMESTAMP
);

-- CreateTable
CREATE TABLE "Reading" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "sessionId" INTEGER NOT NULL,
    "tubeId" INTEGER NOT NULL,
    "section" INTEGER NOT NULL,
    "gmMicroSiemens" REAL,
    "plateMilliamps" REAL,
    "emissionValue" REAL,
    "emissionPassMark" REAL,
    "emissionFullScale" REAL,
    "gridMicroamps" REAL,
    "leakageMicroamps" REAL,
    "shorts" TEXT NOT NULL DEFAULT '',
    "heaterOpen" BOOLEAN NOT NULL DEFAULT false,
    "noise" TEXT NOT NULL DEFAULT '',
    "createdAt" DATETIME NOT NULL DEFAULT CURRENT_TIMESTAMP,
    CONSTRAINT "Reading_sessionId_fkey" FOREIGN KEY ("sessionId") REFERENCES "TestSession" ("id") ON DELETE CASCADE ON UPDATE CASCADE,
    CONSTRAINT "Reading_tubeId_fkey" FOREIGN KEY ("tubeId") REFERENCES "Tube" ("id") ON DELETE CASCADE ON UPDATE CASCADE
);

-- CreateTable
CREATE TABLE "ImportMapping" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "instrument" TEXT NOT NULL,
    "mapping" TEXT NOT NULL
);

-- CreateTable
CREATE TABLE "ImportBatch" (
    "id" INTEGER NOT NULL PRIMARY KEY AUTOINCREMENT,
    "fileHash" TEXT NOT NULL,
    "fileName" TEXT NOT NULL,
    "sessionId" INTEGER NOT NULL,
    "rows" INTEGER NOT NULL,
    "createdAt" DATETIME NOT NULL DEFAULT CURRENT_TIMESTAMP,
    CONSTRAINT "ImportBatch_sessionId_fkey" FOREIGN KEY ("sessionId") REFERENCES "TestSession" ("id") ON DELETE CASCADE ON UPDATE CASCADE
);

-- CreateTable
CREATE TABLE "Setting" (
    "key" TEXT NOT NULL PRIMARY KEY,
    "value" TEXT NOT NULL
);

-- CreateIndex
CREATE UNIQUE INDEX "TubeType_designation_key" ON "TubeType"("designation");

-- CreateIndex
CREATE UNIQUE INDEX "Tube_label_key" ON "Tube"("label");

-- CreateIndex
CREATE INDEX "Tube_typeId_state_idx" ON "Tube"("typeId", "state");

-- CreateIndex
CREATE INDEX "Tube_state_idx" ON "Tube"("state");

-- CreateIndex
CREATE INDEX "Tube_location_idx" ON "Tube"("location");

-- CreateIndex
CREATE INDEX "Tube_verdict_idx" ON "Tube"("verdict");

-- CreateIndex
CREATE INDEX "TubeEvent_tubeId_at_idx" ON "TubeEvent"("tubeId", "at");

-- CreateIndex
CREATE INDEX "TestSession_date_idx" ON "TestSession"("date");

-- CreateIndex
CREATE INDEX "Reading_tubeId_idx" ON "Reading"("tubeId");

-- CreateIndex
CREATE UNIQUE INDEX "Reading_sessionId_tubeId_section_key" ON "Reading"("sessionId", "tubeId", "section");

-- CreateIndex
CREATE UNIQUE INDEX "ImportMapping_instrument_key" ON "ImportMapping"("instrument");

-- CreateIndex
CREATE UNIQUE INDEX "ImportBatch_fileHash_key" ON "ImportBatch"("fileHash");
