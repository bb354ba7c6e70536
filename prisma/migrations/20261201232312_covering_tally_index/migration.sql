-- DropIndex
DROP INDEX "TallyEntry_productionDate_lineId_shiftId_categoryId_idx";

-- CreateIndex
CREATE INDEX "TallyEntry_productionDate_lineId_shiftId_categoryId_count_idx" ON "TallyEntry"("productionDate", "lineId", "shiftId", "categoryId", "count");
